import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { runningReplayOf } from '$lib/server/replay/registry';
import { ReplayRefused, replayRunFor } from '$lib/server/replay/replay-run';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const body = z.object({ rules: z.unknown().optional() });

/** What other rules would have raised on this run's stored frames; never touches real incidents. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { rules } = await readJson(event.request, body);
	const { db } = await getRuntime();
	try {
		return json(await replayRunFor(db, user.id, event.params.id, rules, event.request.signal));
	} catch (err) {
		if (err instanceof ReplayRefused) error(err.status, err.message);
		throw err;
	}
};

/** The signed-in person's replay of this run, if one is running: frames done of the run's total. */
export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	const mine = runningReplayOf(user.id);
	if (!mine || mine.runId !== run.id) return json({ running: false, done: 0, total: run.frameCount });
	return json({ running: true, done: mine.done, total: mine.total });
};
