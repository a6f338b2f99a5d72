// One person's replay of a stored run with the rules they want to try (or the setup's rules):
// at most one replay per person, cancelled when they go away. Shared by POST /api/runs/:id/replay
// and the replay page's form action.
import type { Db } from '../db';
import { RulesRefused } from '../../detect/rules';
import { getSetupRules } from '../rules/service';
import { getRun } from '../runs/service';
import { ReplayCancelled } from './replay-in-worker';
import { beginReplay, endReplay, ReplayBusy } from './registry';
import { replayStoredRun } from './service';

export class ReplayRefused extends Error {
	constructor(
		readonly status: 400 | 404 | 409 | 499,
		message: string,
		/** For refused rules: the field at fault (path from the rule kind) and what is wrong with it. */
		readonly rule?: { path: string[]; problem: string }
	) {
		super(message);
	}
}

/** The replay's answer; throws ReplayRefused for an unknown run, a busy person, bad rules or a cancel. */
export async function replayRunFor(db: Db, userId: string, runId: string, rules: unknown, signal?: AbortSignal) {
	const run = await getRun(db, runId);
	if (!run) throw new ReplayRefused(404, 'no run with this id');
	let slot;
	try {
		slot = beginReplay(userId, run.id, run.frameCount);
	} catch (err) {
		if (err instanceof ReplayBusy) throw new ReplayRefused(409, err.message);
		throw err;
	}
	try {
		const progress = slot;
		const chosen = rules ?? (await getSetupRules(db, run.setupId));
		return await replayStoredRun(db, run, chosen, { signal, onProgress: (done) => (progress.done = done) });
	} catch (err) {
		if (err instanceof RangeError) {
			const rule = err instanceof RulesRefused ? { path: err.path, problem: err.problem } : undefined;
			throw new ReplayRefused(400, err.message.replace(/^detector rules: /, 'rules.'), rule);
		}
		// The person went away (closed the page): nobody reads the answer.
		if (err instanceof ReplayCancelled) throw new ReplayRefused(499, 'replay cancelled');
		throw err;
	} finally {
		endReplay(slot);
	}
}
