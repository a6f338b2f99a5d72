// A run's gaps with the stored frames either side, so the summary can place them in agent time.
import { and, eq, inArray } from 'drizzle-orm';
import type { GapWithNeighbours } from '../../summary/lost-data';
import type { Db } from '../db';
import { frames } from '../db/schema';
import { listGaps } from '../runs/service';

/** More gaps than this in one run are not placed (the summary lists the first ones). */
const MAX_GAPS = 2000;

export async function gapsWithNeighbours(db: Db, runId: string): Promise<GapWithNeighbours[]> {
	const gaps = (await listGaps(db, runId)).slice(0, MAX_GAPS);
	if (gaps.length === 0) return [];
	const seqs = [...new Set(gaps.flatMap((g) => [g.fromSeq - 1, g.toSeq + 1]))].filter((s) => s >= 1);
	const byseq = new Map<number, { t: number; windowS: number }>();
	for (let i = 0; i < seqs.length; i += 500) {
		const rows = await db
			.select({ seq: frames.seq, t: frames.t, windowS: frames.windowS })
			.from(frames)
			.where(and(eq(frames.runId, runId), inArray(frames.seq, seqs.slice(i, i + 500))));
		for (const r of rows) byseq.set(r.seq, r);
	}
	return gaps.map((g) => {
		const before = byseq.get(g.fromSeq - 1);
		const after = byseq.get(g.toSeq + 1);
		return {
			fromSeq: g.fromSeq,
			toSeq: g.toSeq,
			before: before ? { t_ms: before.t, window_s: before.windowS } : null,
			after_t_ms: after?.t ?? null
		};
	});
}
