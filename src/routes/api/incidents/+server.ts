import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { incidentQuerySchema, listIncidents } from '$lib/server/incidents/service';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, incidentQuerySchema);
	const { db } = await getRuntime();
	return json(await listIncidents(db, q));
};
