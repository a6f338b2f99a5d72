// A run's timeline: at most `points` buckets covering [from_ms, to_ms) (default the whole run).
import { error } from '@sveltejs/kit';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { timelineQuerySchema } from '$lib/server/timeline/query';
import { runTimeline } from '$lib/server/timeline/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, timelineQuerySchema);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return json(await runTimeline(db, run, q));
};
