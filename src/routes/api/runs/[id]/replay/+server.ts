import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { ReplayCancelled } from '$lib/server/replay/replay-in-worker';
import { beginReplay, endReplay, ReplayBusy, runningReplayOf } from '$lib/server/replay/registry';
import { replayStoredRun } from '$lib/server/replay/service';
import { getSetupRules } from '$lib/server/rules/service';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const body = z.object({ rules: z.unknown().optional() });

/** What other rules would have raised on this run's stored frames; never touches real incidents. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { rules } = await readJson(event.request, body);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	let slot;
	try {
		slot = beginReplay(user.id, run.id, run.frameCount);
	} catch (err) {
		if (err instanceof ReplayBusy) error(409, err.message);
		throw err;
	}
	try {
		const progress = slot;
		const chosen = rules ?? (await getSetupRules(db, run.setupId));
		return json(await replayStoredRun(db, run, chosen, { signal: event.request.signal, onProgress: (done) => (progress.done = done) }));
	} catch (err) {
		if (err instanceof RangeError) error(400, err.message.replace(/^detector rules: /, 'rules.'));
		// The person went away (closed the page): nobody reads the answer.
		if (err instanceof ReplayCancelled) error(499, 'replay cancelled');
		throw err;
	} finally {
		endReplay(slot);
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
