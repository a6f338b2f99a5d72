// Resolves "how long was it locked" for the few buckets whose lock min and max straddle the
// threshold, by adding up the windows of those buckets' frames in the database (a key-range scan
// of each bucket's seq range, never the whole run). Past a frame budget the rest stay a range.
import { and, between, eq, gte, lt, sql } from 'drizzle-orm';
import type { Rollup } from '../../rollup/rollup';
import { straddles } from '../../summary/time-locked';
import type { Db } from '../db';
import { frames } from '../db/schema';

/** At most this many frames are read to settle straddling buckets (a few hours at 1 Hz). */
export const LOCK_FRAME_BUDGET = 20_000;

export async function lockedFromFrames(db: Db, runId: string, buckets: readonly Rollup[], threshold: number): Promise<Map<string, number>> {
	const out = new Map<string, number>();
	let budget = LOCK_FRAME_BUDGET;
	// Fine buckets first: they settle the most time per frame read.
	const todo = buckets.filter((b) => straddles(b, threshold)).sort((a, b) => a.resolution_s - b.resolution_s || a.bucket_t - b.bucket_t);
	for (const b of todo) {
		if (b.frames > budget) break;
		budget -= b.frames;
		const [row] = await db
			.select({
				n: sql<number>`count(*)::int`,
				locked_s: sql<number>`coalesce(sum(case when ${frames.lock} >= ${threshold} then ${frames.windowS} else 0 end), 0)::float8`
			})
			.from(frames)
			.where(
				and(
					eq(frames.runId, runId),
					between(frames.seq, b.firstSeq, b.lastSeq),
					gte(frames.t, b.bucket_t),
					lt(frames.t, b.bucket_t + b.resolution_s * 1000)
				)
			);
		// Raw retention may have deleted some of them: then the bucket stays a range.
		if (row && row.n === b.frames) out.set(`${b.resolution_s}:${b.bucket_t}`, Math.min(b.window_s, row.locked_s));
	}
	return out;
}
