// A run's frames (or a span of agent time) as CSV or NDJSON text, produced a page at a time from
// the database so that a week-long run never sits in memory: the route wraps these generators in
// a pull stream, and the next page is read only when the client has taken the previous one.
import { and, count, eq, gte, isNotNull, lt, sql, type SQL } from 'drizzle-orm';
import { ROLLUP_RESOLUTIONS_S } from '../../rollup/rollup';
import { csvLines, frameCsvCells, frameCsvHeader, type FrameCsvLayout } from '../../transfer/frame-csv';
import type { Db } from '../db';
import { frameRollups, frames } from '../db/schema';
import type { RunRow } from '../runs/service';
import { framePages } from '../runs/frame-pages';

/** Agent-time span [from_ms, to_ms): either end open when left out. */
export interface ExportSpan {
	from_ms?: number;
	to_ms?: number;
}

// CSV rows leave out the IQ histogram, so a larger page stays small; NDJSON lines carry it (up to
// 64×64 counts each), so its pages are shorter.
const CSV_PAGE_ROWS = 500;
const NDJSON_PAGE_ROWS = 250;
const COARSEST_S = Math.max(...ROLLUP_RESOLUTIONS_S);

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
		db.select({ n: count() }).from(frameRollups).where(and(coarse, isNotNull(frameRollups.transitions)))
	]);
	return { states: run.states, transitions: withTransitions[0].n > 0, auxNames: names.rows.map((r) => r.name) };
}

/** How many frames the export will hold: the run's count, or a count over the span. */
export async function exportFrameCount(db: Db, run: Pick<RunRow, 'id' | 'frameCount'>, span: ExportSpan): Promise<number> {
	if (span.from_ms === undefined && span.to_ms === undefined) return run.frameCount;
	const where: SQL[] = [eq(frames.runId, run.id)];
	if (span.from_ms !== undefined) where.push(gte(frames.t, span.from_ms));
	if (span.to_ms !== undefined) where.push(lt(frames.t, span.to_ms));
	const [{ n }] = await db.select({ n: count() }).from(frames).where(and(...where));
	return n;
}

// Both exports stop at the run's last seq when the download began, so a live run's file matches the
// frame count announced in its header (frames that fill gaps meanwhile may still join).
type ExportedRun = Pick<RunRow, 'id' | 'lastSeq'>;

export async function* runCsv(db: Db, run: ExportedRun, layout: FrameCsvLayout, span: ExportSpan): AsyncGenerator<string> {
	yield csvLines([frameCsvHeader(layout)]);
	const pages = framePages(db, run.id, { withoutIq: true, pageSize: CSV_PAGE_ROWS, toSeq: run.lastSeq, fromT: span.from_ms, toT: span.to_ms });
	for await (const page of pages) {
		yield csvLines(page.map((stored) => frameCsvCells(layout, stored)));
	}
}

/** One wire-format frame per line, exactly as an agent sends it (iq included), ready to replay or import. */
export async function* runNdjson(db: Db, run: ExportedRun, span: ExportSpan): AsyncGenerator<string> {
	for await (const page of framePages(db, run.id, { pageSize: NDJSON_PAGE_ROWS, toSeq: run.lastSeq, fromT: span.from_ms, toT: span.to_ms })) {
		yield page.map((stored) => JSON.stringify(stored.frame) + '\n').join('');
	}
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
