// The run summary page: the whole run, or a span given as ?from_ms=&to_ms= (agent clock, as the
// timeline links) or as ?from=&to= wall-clock times in the lab's time zone (the form below).
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { parseQuery, requireRole } from '$lib/server/http/guard';
import { zonedLocalToMs } from '$lib/server/reports/local-input';
import { labTimeZone } from '$lib/server/reports/time-zone';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { spanQuerySchema } from '$lib/server/summary/query';
import { runSummary, SummaryError } from '$lib/server/summary/service';
import type { PageServerLoad } from './$types';

const localTime = z
	.string()
	.regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}$/, 'must be a date and time such as 2026-12-01T08:00')
	.or(z.literal(''))
	.optional();
const wallQuery = z.object({ from: localTime, to: localTime });

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const timeZone = labTimeZone();
	const wall = parseQuery(event.url, wallQuery);
	const q = parseQuery(event.url, spanQuerySchema);
	const from_ms = wall.from ? zonedLocalToMs(wall.from, timeZone) : q.from_ms;
	const to_ms = wall.to ? zonedLocalToMs(wall.to, timeZone) : q.to_ms;
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	try {
		const summary = await runSummary(db, run, { from_ms, to_ms });
		return { run: { id: run.id, name: run.name, setupId: run.setupId }, summary, timeZone };
	} catch (e) {
		if (e instanceof SummaryError) error(e.status, e.message);
		throw e;
	}
};
