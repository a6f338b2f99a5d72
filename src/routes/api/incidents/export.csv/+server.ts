import { parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { downloadResponse } from '$lib/server/transfer/export-response';
import { incidentExportQuery, incidentsCsv } from '$lib/server/transfer/incident-export';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, incidentExportQuery);
	const { db } = await getRuntime();
	const day = new Date().toISOString().slice(0, 10);
	return downloadResponse(incidentsCsv(db, q), { contentType: 'text/csv; charset=utf-8', fileName: `incidents_${day}.csv` });
};
