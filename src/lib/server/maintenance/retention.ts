// Raw-frame retention: a setup may keep raw frames for N days only. Rollups, incidents, gaps and
// the run itself stay for good (the review reads rollups), and an open run keeps every frame after
// its last detector snapshot, which a restart must replay.
import { and, asc, eq, gte, isNotNull, lte } from 'drizzle-orm';
import type { Db } from '../db';
import { frames, runSnapshots, runs, setups } from '../db/schema';

const DAY_MS = 86_400_000;
/** Frames deleted per statement, so the single database connection is never held for long. */
const DELETE_CHUNK = 5000;

export const retentionSchemaBounds = { minDays: 1, maxDays: 36_500 } as const;

/** The first stored seq whose frame arrived at or after `cutoff` (frames arrive in seq order). */
async function firstSeqAtOrAfter(db: Db, runId: string, cutoff: Date, hiSeq: number): Promise<number> {
	// Binary search over seq on the primary key: O(log n) index probes instead of a scan of the run.
	let lo = 0;
	let hi = hiSeq + 1;
	while (lo + 1 < hi) {
		const mid = Math.floor((lo + hi) / 2);
		const [row] = await db
			.select({ seq: frames.seq, receivedAt: frames.receivedAt })
			.from(frames)
			.where(and(eq(frames.runId, runId), gte(frames.seq, mid)))
			.orderBy(asc(frames.seq))
			.limit(1);
		if (!row || row.receivedAt >= cutoff) hi = mid;
		else lo = mid;
	}
	return hi;
}

/** Deletes raw frames past their setup's retention; returns how many went. */
export async function applyRetention(db: Db, now = new Date()): Promise<number> {
	const candidates = await db
		.select({
			runId: runs.id,
			status: runs.status,
			lastSeq: runs.lastSeq,
			days: setups.rawRetentionDays,
			snapshotSeq: runSnapshots.lastSeq
		})
		.from(runs)
		.innerJoin(setups, eq(setups.id, runs.setupId))
		.leftJoin(runSnapshots, eq(runSnapshots.runId, runs.id))
		.where(isNotNull(setups.rawRetentionDays));
	let deleted = 0;
	for (const c of candidates) {
		const cutoff = new Date(now.getTime() - c.days! * DAY_MS);
		// An open run keeps what its detectors would replay after a restart.
		const keepFrom = c.status === 'open' ? (c.snapshotSeq ?? 0) + 1 : c.lastSeq + 1;
		const limit = Math.min(await firstSeqAtOrAfter(db, c.runId, cutoff, c.lastSeq), keepFrom) - 1;
		for (;;) {
			// Chunks by rows, not by seq range: a run's seqs may jump by millions across a gap.
			const [edge] = await db
				.select({ seq: frames.seq })
				.from(frames)
				.where(and(eq(frames.runId, c.runId), lte(frames.seq, limit)))
				.orderBy(asc(frames.seq))
				.offset(DELETE_CHUNK - 1)
				.limit(1);
			const to = edge?.seq ?? limit;
			const gone = await db
				.delete(frames)
				.where(and(eq(frames.runId, c.runId), lte(frames.seq, to)))
				.returning({ seq: frames.seq });
			deleted += gone.length;
			if (!edge || gone.length === 0) break;
			await new Promise((r) => setImmediate(r));
		}
	}
	return deleted;
}
