// The run summary of a run or of [from_ms, to_ms): exposure, rates against the prediction, time
// locked, occupancy with its test, transitions, lost data and incidents (see $lib/summary).
import { error } from '@sveltejs/kit';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { spanQuerySchema } from '$lib/server/summary/query';
import { runSummary, SummaryError } from '$lib/server/summary/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, spanQuerySchema);
	const { db } = await getRuntime();
	try {
		return json(await runSummary(db, event.params.id, q));
	} catch (e) {
		if (e instanceof SummaryError) error(e.status, e.message);
		throw e;
	}
};
