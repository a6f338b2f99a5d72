// Where a run's detector engine is kept between restarts: the last saved snapshot, plus the stored
// frames after it replayed through the restored engine (the engine is deterministic, and frames
// keep the receipt time the detectors saw), so a restart resumes exactly where it stopped.
import { eq, sql } from 'drizzle-orm';
import { DetectorEngine } from '../../detect/engine';
import type { RunInfo } from '../../detect/run-info';
import type { Db, Tx } from '../db';
import { runSnapshots } from '../db/schema';
import { framePages } from '../runs/frame-pages';

export async function saveSnapshot(tx: Tx | Db, runId: string, engine: DetectorEngine) {
	const state = engine.snapshot();
	await tx
		.insert(runSnapshots)
		.values({ runId, lastSeq: state.lastSeq, state })
		.onConflictDoUpdate({
			target: runSnapshots.runId,
			set: { lastSeq: sql`excluded.last_seq`, state: sql`excluded.state`, savedAt: sql`now()` }
		});
}

/**
 * The run's engine as it was after its last stored frame. Events the replayed frames raise are
 * dropped: they were recorded when those frames were committed.
 */
export async function restoreEngine(
	db: Db,
	runId: string,
	rules: unknown,
	info: RunInfo
): Promise<{ engine: DetectorEngine; replayed: number }> {
	const [saved] = await db.select({ state: runSnapshots.state }).from(runSnapshots).where(eq(runSnapshots.runId, runId));
	let engine: DetectorEngine | null = null;
	if (saved) {
		try {
			engine = DetectorEngine.restore(saved.state);
		} catch (err) {
			console.warn(`run ${runId}: detector snapshot unreadable, rebuilding from the stored frames: ${(err as Error).message}`);
		}
	}
	engine ??= new DetectorEngine(rules, info);
	let replayed = 0;
	// Late frames filled gaps after higher seqs had been fed: live never fed them, nor does this.
	for await (const page of framePages(db, runId, { afterSeq: engine.lastSeq, skipLate: true, withoutIq: true })) {
		for (const stored of page) engine.onFrame(stored.frame, stored.receivedAt_ms);
		replayed += page.length;
	}
	return { engine, replayed };
}
