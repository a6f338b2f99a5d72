// A run's frames as export text written by the database itself, a page at a time: each page comes
// back as one text value, so a week-long export allocates one string per page in the server rather
// than a row object, a frame object and a score of cell strings per frame. Measured with
// tests/bench/export-memory: formatting in JavaScript grew the server's heap by 25–70 MB of
// garbage over a 7-day export, past the 50 MB the export may cost.
//
// The text matches the JavaScript reference (frameCsvCells for CSV, JSON.stringify of the wire
// frame for NDJSON) value for value; tests/unit/transfer/frame-text-pages.test.ts parses both and
// compares them. Numbers are PostgreSQL's shortest exact float text (1e-05 where JavaScript writes
// 0.00001: the same double), and jsonb is written without its spaces, which is safe because frames
// hold only numbers and aux names of [A-Za-z0-9_] (the wire schema refuses anything else).
import { sql, type SQL } from 'drizzle-orm';
import type { FrameCsvLayout } from '../../transfer/frame-csv';
import type { Db } from '../db';
import { framePageWhere } from '../runs/frame-pages';

export interface TextPageRange {
	afterSeq: number;
	toSeq: number;
	/** Only frames with agent time t at or after this (ms). */
	fromT?: number;
	/** Only frames with agent time t before this (ms). */
	toT?: number;
}

const isoUtc = (ts: SQL) => sql`to_char(${ts}, 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;
const orEmpty = (value: SQL) => sql`coalesce(${value}, '')`;
const compactJson = (column: SQL) => sql`replace(${column}::text, ' ', '')`;

/** One CSV line per frame, the columns of frameCsvHeader(layout); no cell needs quoting (numbers and timestamps only). */
export function csvLineSql(layout: FrameCsvLayout): SQL {
	const cells: SQL[] = [
		sql`seq::text`,
		sql`t::text`,
		isoUtc(sql`timestamp 'epoch' + t * interval '1 millisecond'`),
		sql`window_s::text`,
		sql`shots::text`,
		sql`vacuum::text`
	];
	for (let i = 0; i < layout.states; i++) cells.push(orEmpty(sql`counts ->> ${sql.raw(String(i))}`));
	cells.push(sql`lock::text`, sql`switches::text`, sql`dwell_s::text`, sql`escapes::text`, sql`vacuum_s::text`, orEmpty(sql`amp::text`));
	if (layout.transitions) {
		for (let i = 0; i < layout.states * layout.states; i++) cells.push(orEmpty(sql`transitions ->> ${sql.raw(String(i))}`));
	}
	for (const name of layout.auxNames) cells.push(orEmpty(sql`aux ->> ${name}::text`));
	cells.push(sql`CASE WHEN late THEN 'true' ELSE 'false' END`, isoUtc(sql`created_at AT TIME ZONE 'UTC'`));
	// `||` rather than concat_ws: a layout with many states exceeds a function's 100 arguments.
	return sql.join(cells, sql` || ',' || `);
}

/** One wire-format frame per line, keys in the wire's order, optional fields only when stored. */
export function ndjsonLineSql(): SQL {
	const optional = (key: string, value: SQL, column: SQL) =>
		sql`CASE WHEN ${column} IS NULL THEN '' ELSE ${`,"${key}":`}::text || ${value} END`;
	return sql.join(
		[
			sql`'{"seq":' || seq`,
			sql`',"t":' || t`,
			sql`',"window_s":' || window_s::text`,
			sql`',"shots":' || shots`,
			sql`',"vacuum":' || vacuum`,
			sql`',"counts":' || ${compactJson(sql`counts`)}`,
			sql`',"lock":' || lock::text`,
			sql`',"switches":' || switches`,
			sql`',"dwell_s":' || dwell_s::text`,
			sql`',"escapes":' || escapes`,
			sql`',"vacuum_s":' || vacuum_s::text`,
			optional('transitions', compactJson(sql`transitions`), sql`transitions`),
			optional('amp', sql`amp::text`, sql`amp`),
			optional('aux', compactJson(sql`aux`), sql`aux`),
			optional('iq', compactJson(sql`iq`), sql`iq`),
			sql`'}'`
		],
		sql` || `
	);
}

/**
 * How big a page is. Pages are kept under V8's large-object size (about 128 kB): a larger string
 * is allocated where only a full collection frees it, so a week's export left hundreds of dead pages
 * behind between full collections. Smaller pages are half of the fix; the other half is the heap
 * growth set in src/bin/serve.js (tests/bench/export-memory, --trace-gc). Lines vary in length (IQ
 * histograms of up to 64×64 counts), so the row count follows the bytes of the page before.
 */
export interface PageSizing {
	/** Text per page to aim for, in bytes (the text is ASCII). */
	bytes: number;
	/** Rows in the first page, before any line length is known. */
	firstRows: number;
	/** Most rows in a page, however short the lines. */
	maxRows?: number;
}

const nextRows = (rows: number, text: string, sizing: PageSizing) =>
	Math.max(1, Math.min(sizing.maxRows ?? 5000, Math.floor((rows * sizing.bytes) / Math.max(1, text.length))));

/** Pages of text, each the lines of consecutive frames in seq order, every line ending in a newline. */
export async function* frameTextPages(db: Db, runId: string, line: SQL, range: TextPageRange, sizing: PageSizing): AsyncGenerator<string> {
	let after = range.afterSeq;
	let rows = sizing.firstRows;
	for (;;) {
		const { rows: result } = await db.execute<{ text: string | null; last: number | null; n: number }>(sql`
			SELECT string_agg(line, '' ORDER BY seq) AS text, max(seq) AS last, count(*)::int AS n
			FROM (
				SELECT seq, ${line} || E'\n' AS line FROM frames
				WHERE ${framePageWhere(runId, after, range)}
				ORDER BY seq LIMIT ${rows}
			) page`);
		const page = result[0];
		if (!page || page.n === 0 || page.text === null || page.last === null) return;
		after = Number(page.last);
		yield page.text;
		if (page.n < rows) return;
		rows = nextRows(rows, page.text, sizing);
		// Let live ingest and other requests in between pages.
		await new Promise((resolve) => setImmediate(resolve));
	}
}
