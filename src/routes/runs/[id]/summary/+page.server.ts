// The run summary page: the whole run, or the span in ?from_ms=&to_ms= (agent clock).
import { error } from '@sveltejs/kit';
import { parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { spanQuerySchema } from '$lib/server/summary/query';
import { runSummary, SummaryError } from '$lib/server/summary/service';
import { labTimeZone } from '$lib/server/reports/time-zone';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, spanQuerySchema);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	try {
		const summary = await runSummary(db, run, q);
		return { run: { id: run.id, name: run.name, setupId: run.setupId }, summary, timeZone: labTimeZone() };
	} catch (e) {
		if (e instanceof SummaryError) error(e.status, e.message);
		throw e;
	}
};
