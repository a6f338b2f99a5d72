// Reads the rollup buckets that cover a span (one query per cover piece, a handful of rows each
// at the coarse levels) and the agent-time extent of a run's data.
import { and, eq, max, min } from 'drizzle-orm';
import { ROLLUP_RESOLUTIONS_S, type Rollup } from '../../rollup/rollup';
import type { SpanCover } from '../../summary/span-cover';
import type { Db } from '../db';
import { frameRollups } from '../db/schema';
import { readRollups } from '../rollups/store';

const FINEST_S = Math.min(...ROLLUP_RESOLUTIONS_S);

/** The covering buckets in time order. */
export async function readCover(db: Db, runId: string, cover: SpanCover): Promise<Rollup[]> {
	const parts = await Promise.all(cover.pieces.map((p) => readRollups(db, runId, p.resolution_s, p.from_ms, p.to_ms - 1)));
	return parts.flat().sort((a, b) => a.bucket_t - b.bucket_t);
}

/** [first bucket start, last bucket end) of the run's finest rollups, agent ms; null without data. */
export async function runDataExtent(db: Db, runId: string): Promise<{ from_ms: number; to_ms: number } | null> {
	const [row] = await db
		.select({ first: min(frameRollups.bucketT), last: max(frameRollups.bucketT) })
		.from(frameRollups)
		.where(and(eq(frameRollups.runId, runId), eq(frameRollups.resolutionS, FINEST_S)));
	if (row?.first == null || row.last == null) return null;
	return { from_ms: Number(row.first), to_ms: Number(row.last) + FINEST_S * 1000 };
}
