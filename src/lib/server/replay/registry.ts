// Replays running now, one per person: a replay of a day-long run takes a while and a share of
// the server, so a second one from the same person waits for the first. Holds their progress.

export interface RunningReplay {
	userId: string;
	runId: string;
	/** Frames through the engine so far. */
	done: number;
	/** Frames the run has stored (its frame count when the replay started). */
	total: number;
	startedAt_ms: number;
}

/** A replay is already running for this person. */
export class ReplayBusy extends Error {
	constructor(readonly running: RunningReplay) {
		super(
			`a replay is already running for you (run ${running.runId}: ${running.done} of ${running.total} frames done); wait for it to finish`
		);
		this.name = 'ReplayBusy';
	}
}

const running = new Map<string, RunningReplay>();

/** Claims the person's one replay slot at once (no await between the check and the claim). */
export function beginReplay(userId: string, runId: string, total: number): RunningReplay {
	const current = running.get(userId);
	if (current) throw new ReplayBusy({ ...current });
	const entry: RunningReplay = { userId, runId, done: 0, total, startedAt_ms: Date.now() };
	running.set(userId, entry);
	return entry;
}

/** Frees the slot; only the entry that claimed it can. */
export function endReplay(entry: RunningReplay) {
	if (running.get(entry.userId) === entry) running.delete(entry.userId);
}

export function runningReplayOf(userId: string): RunningReplay | undefined {
	return running.get(userId);
}
