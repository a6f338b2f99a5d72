// A run's frames (or a span of agent time) as CSV or NDJSON text, produced a page at a time from
// the database so that a week-long run never sits in memory: the route wraps these generators in
// a pull stream, and the next page is read only when the client has taken the previous one.
import { and, count, eq, gt, gte, isNotNull, lt, lte, max, min, sql, type SQL } from 'drizzle-orm';
import { bucketStart, ROLLUP_RESOLUTIONS_S } from '../../rollup/rollup';
import { csvLines, frameCsvHeader, type FrameCsvLayout } from '../../transfer/frame-csv';
import type { Db } from '../db';
import { frameRollups, frames } from '../db/schema';
import type { RunRow } from '../runs/service';
import { csvLineSql, frameTextPages, ndjsonLineSql, type PageSizing } from './frame-text-pages';

/** Agent-time span [from_ms, to_ms): either end open when left out. */
export interface ExportSpan {
	from_ms?: number;
	to_ms?: number;
}

// Each page is one text value the database builds, sized in bytes (frame-text-pages.ts explains
// why 64 kB); a CSV line is about 170 bytes, an NDJSON line 300 bytes to 20 kB with its IQ histogram.
const CSV_PAGES: PageSizing = { bytes: 64 * 1024, firstRows: 300 };
const NDJSON_PAGES: PageSizing = { bytes: 64 * 1024, firstRows: 50 };
const COARSEST_S = Math.max(...ROLLUP_RESOLUTIONS_S);
const FINEST_S = Math.min(...ROLLUP_RESOLUTIONS_S);

/** Seq range [afterSeq, toSeq] the export of a run reads: the whole run, or the seqs the span's rollups hold. */
export interface SeqRange {
	afterSeq: number;
	toSeq: number;
}

/**
 * A span's frames lie within the seqs of the finest rollup buckets it touches (rollups are written
 * with the frames), so the keyset scan is bounded by seq as well as filtered by t: without the
 * bound, the page after the span's last frame would read the rest of the run to find nothing.
 */
export async function exportSeqRange(db: Db, run: Pick<RunRow, 'id' | 'lastSeq'>, span: ExportSpan): Promise<SeqRange | null> {
	if (span.from_ms === undefined && span.to_ms === undefined) return { afterSeq: 0, toSeq: run.lastSeq };
	const where: SQL[] = [eq(frameRollups.runId, run.id), eq(frameRollups.resolutionS, FINEST_S)];
	if (span.from_ms !== undefined) where.push(gte(frameRollups.bucketT, bucketStart(span.from_ms, FINEST_S)));
	if (span.to_ms !== undefined) where.push(lt(frameRollups.bucketT, span.to_ms));
	const [r] = await db
		.select({ first: min(frameRollups.firstSeq), last: max(frameRollups.lastSeq) })
		.from(frameRollups)
		.where(and(...where));
	if (r?.first == null || r.last == null) return null;
	return { afterSeq: r.first - 1, toSeq: Math.min(r.last, run.lastSeq) };
}

/**
 * The CSV columns of a run: aux names and whether transitions occur, read from the coarsest
 * rollups (a few hundred rows for a week) instead of a first pass over the frames.
 */
export async function csvLayoutOf(db: Db, run: Pick<RunRow, 'id' | 'states'>): Promise<FrameCsvLayout> {
	const coarse = and(eq(frameRollups.runId, run.id), eq(frameRollups.resolutionS, COARSEST_S));
	const [names, withTransitions] = await Promise.all([
		db.execute<{ name: string }>(
			sql`SELECT DISTINCT jsonb_object_keys(aux) AS name FROM frame_rollups WHERE run_id = ${run.id} AND resolution_s = ${COARSEST_S} ORDER BY name`
		),
		db
			.select({ n: count() })
			.from(frameRollups)
			.where(and(coarse, isNotNull(frameRollups.transitions)))
	]);
	return { states: run.states, transitions: withTransitions[0].n > 0, auxNames: names.rows.map((r) => r.name) };
}

/** How many frames the export will hold: the run's count, or a count over the span. */
export async function exportFrameCount(
	db: Db,
	run: Pick<RunRow, 'id' | 'frameCount'>,
	span: ExportSpan,
	range: SeqRange | null
): Promise<number> {
	if (span.from_ms === undefined && span.to_ms === undefined) return run.frameCount;
	if (!range) return 0;
	const where: SQL[] = [eq(frames.runId, run.id), gt(frames.seq, range.afterSeq), lte(frames.seq, range.toSeq)];
	if (span.from_ms !== undefined) where.push(gte(frames.t, span.from_ms));
	if (span.to_ms !== undefined) where.push(lt(frames.t, span.to_ms));
	const [{ n }] = await db
		.select({ n: count() })
		.from(frames)
		.where(and(...where));
	return n;
}

// Both exports stop at the run's last seq when the download began (exportSeqRange), so a live run's
// file matches the frame count announced in its header (frames that fill gaps meanwhile may still join).
export async function* runCsv(
	db: Db,
	runId: string,
	range: SeqRange | null,
	layout: FrameCsvLayout,
	span: ExportSpan
): AsyncGenerator<string> {
	yield csvLines([frameCsvHeader(layout)]);
	if (!range) return;
	yield* frameTextPages(db, runId, csvLineSql(layout), { ...range, fromT: span.from_ms, toT: span.to_ms }, CSV_PAGES);
}

/** One wire-format frame per line, exactly as an agent sends it (iq included), ready to replay or import. */
export async function* runNdjson(db: Db, runId: string, range: SeqRange | null, span: ExportSpan): AsyncGenerator<string> {
	if (!range) return;
	yield* frameTextPages(db, runId, ndjsonLineSql(), { ...range, fromT: span.from_ms, toT: span.to_ms }, NDJSON_PAGES);
}

/** A file name people recognise: the run key, and the span when there is one; ASCII only. */
export function exportFileName(run: Pick<RunRow, 'key'>, span: ExportSpan, ext: string): string {
	const slug = run.key.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'run';
	const stamp = (ms: number) => new Date(ms).toISOString().slice(0, 19).replace(/[:]/g, '').replace('T', '-');
	const parts = [slug];
	if (span.from_ms !== undefined || span.to_ms !== undefined) {
		parts.push(span.from_ms !== undefined ? stamp(span.from_ms) : 'start', span.to_ms !== undefined ? stamp(span.to_ms) : 'end');
	}
	return `${parts.join('_')}.${ext}`;
}
