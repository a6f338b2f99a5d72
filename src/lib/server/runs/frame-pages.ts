// Long reads of a run's frames, a page at a time by seq (keyset), yielding to the event loop
// between pages so a day-long run never loads into memory at once nor blocks live ingest.
import { and, asc, eq, getTableColumns, gt, gte, lt, lte, type SQL } from 'drizzle-orm';
import type { Frame } from '../../protocol/frame';
import type { Db } from '../db';
import { frames } from '../db/schema';
import { rowToFrame } from '../ingest/frame-rows';

export const FRAME_PAGE_ROWS = 2000;

export interface StoredFrame {
	frame: Frame;
	receivedAt_ms: number;
	late: boolean;
}

export interface FramePageOptions {
	/** Frames with seq above this (default 0: from the start). */
	afterSeq?: number;
	/** Up to and including this seq. */
	toSeq?: number;
	/** Leave out frames that filled a gap after a higher seq (the detectors never saw them). */
	skipLate?: boolean;
	pageSize?: number;
	/** Leave out the IQ histograms (the detectors never read them; they are most of a row's bytes). */
	withoutIq?: boolean;
	/** Only frames with agent time t at or after this (ms). */
	fromT?: number;
	/** Only frames with agent time t before this (ms). */
	toT?: number;
}

const { iq: _iq, ...columnsWithoutIq } = getTableColumns(frames);

/** The filter of one keyset page: the run's frames above `afterSeq`, within the options' bounds. */
export function framePageWhere(
	runId: string,
	afterSeq: number,
	options: Omit<FramePageOptions, 'afterSeq' | 'pageSize' | 'withoutIq'>
): SQL {
	const where: SQL[] = [eq(frames.runId, runId), gt(frames.seq, afterSeq)];
	if (options.toSeq !== undefined) where.push(lte(frames.seq, options.toSeq));
	if (options.skipLate) where.push(eq(frames.late, false));
	if (options.fromT !== undefined) where.push(gte(frames.t, options.fromT));
	if (options.toT !== undefined) where.push(lt(frames.t, options.toT));
	return and(...where)!;
}

/** Pages of stored frames in seq order. */
export async function* framePages(db: Db, runId: string, options: FramePageOptions = {}): AsyncGenerator<StoredFrame[]> {
	const pageSize = options.pageSize ?? FRAME_PAGE_ROWS;
	let after = options.afterSeq ?? 0;
	for (;;) {
		const rows = await db
			.select(options.withoutIq ? columnsWithoutIq : getTableColumns(frames))
			.from(frames)
			.where(framePageWhere(runId, after, options))
			.orderBy(asc(frames.seq))
			.limit(pageSize);
		if (rows.length === 0) return;
		after = rows[rows.length - 1].seq;
		yield rows.map((r) => ({ frame: rowToFrame({ iq: null, ...r }), receivedAt_ms: r.receivedAt.getTime(), late: r.late }));
		if (rows.length < pageSize) return;
		await new Promise((resolve) => setImmediate(resolve));
	}
}
