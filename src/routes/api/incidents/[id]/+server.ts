import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getIncident } from '$lib/server/incidents/service';
import { incidentGroup } from '$lib/server/oncall/paging';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	const found = await getIncident(db, event.params.id);
	if (!found) error(404, 'no incident with this id');
	return json({ ...found, group: await incidentGroup(db, event.params.id) });
};
