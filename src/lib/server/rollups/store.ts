// Stores frame rollups: merges each batch's deltas into the stored rows inside the caller's
// transaction, rebuilds a run's rollups from its stored frames, and reads them for the timeline.
import { and, asc, count, eq, getTableColumns, gte, lte, sql, type SQL } from 'drizzle-orm';
import { compileRates, expectFrame } from '../../detect/expected';
import { parseRunInfo } from '../../detect/run-info';
import { bucketStart, mergeRollups, rollupFrames, rollupKey, type ExpectedOf, type Rollup } from '../../rollup/rollup';
import type { Db } from '../db';
import { frameRollups, frames, runs } from '../db/schema';
import { runInfoFor } from '../runs/detector-context';
import { FRAME_PAGE_ROWS, framePages } from '../runs/frame-pages';

type RollupRow = typeof frameRollups.$inferSelect;
type RollupInsert = typeof frameRollups.$inferInsert;

/**
 * Rows per statement. PostgreSQL would allow 65 535 parameters (21 per row), but PGlite's upsert of
 * a few hundred rows fails inside the engine ("bad buffer ID: 0", ReleaseBuffer) — a 500-frame
 * backlog of 10 s windows touches ~600 buckets — so statements stay well below that.
 */
export const ROLLUP_ROWS_PER_STATEMENT = 100;

export function rollupToRow(runId: string, r: Rollup): RollupInsert {
	return {
		runId,
		resolutionS: r.resolution_s,
		bucketT: r.bucket_t,
		frames: r.frames,
		firstSeq: r.firstSeq,
		lastSeq: r.lastSeq,
		windowS: r.window_s,
		shots: r.shots,
		vacuum: r.vacuum,
		counts: r.counts,
		switches: r.switches,
		dwellS: r.dwell_s,
		escapes: r.escapes,
		vacuumS: r.vacuum_s,
		transitions: r.transitions,
		lockMin: r.lockMin,
		lockSum: r.lockSum,
		lockMax: r.lockMax,
		aux: r.aux,
		expectedSwitches: r.expectedSwitches,
		expectedEscapes: r.expectedEscapes
	};
}

export function rowToRollup(row: RollupRow): Rollup {
	return {
		resolution_s: row.resolutionS,
		bucket_t: row.bucketT,
		frames: row.frames,
		firstSeq: row.firstSeq,
		lastSeq: row.lastSeq,
		window_s: row.windowS,
		shots: row.shots,
		vacuum: row.vacuum,
		counts: row.counts,
		switches: row.switches,
		dwell_s: row.dwellS,
		escapes: row.escapes,
		vacuum_s: row.vacuumS,
		transitions: row.transitions,
		lockMin: row.lockMin,
		lockSum: row.lockSum,
		lockMax: row.lockMax,
		aux: row.aux,
		expectedSwitches: row.expectedSwitches,
		expectedEscapes: row.expectedEscapes
	};
}

/**
 * The newest stored bucket per resolution of one run, so a live writer whose frames keep landing
 * in the current bucket merges without reading it back each commit. The writer owns one per run.
 * It mirrors committed rows only: the writer remembers rows after its commit, and a writer whose
 * commit failed is discarded with its cache (the next one starts empty).
 * Nothing else may write the run's rollups while a cache is in use (a rebuild runs with the
 * server stopped).
 */
export class RollupCache {
	private readonly newest = new Map<number, Rollup>();

	/** The stored rollup with exactly this key, when it is the newest bucket of its resolution. */
	get(resolution_s: number, bucket_t: number): Rollup | undefined {
		const r = this.newest.get(resolution_s);
		return r && r.bucket_t === bucket_t ? r : undefined;
	}

	/** Records a stored row; kept only when it is the newest bucket of its resolution. */
	remember(r: Rollup) {
		const held = this.newest.get(r.resolution_s);
		if (!held || r.bucket_t >= held.bucket_t) this.newest.set(r.resolution_s, r);
	}
}

function chunks<T>(items: T[], size: number): T[][] {
	const out: T[][] = [];
	for (let i = 0; i < items.length; i += size) out.push(items.slice(i, i + size));
	return out;
}

async function selectStored(tx: Db, runId: string, keys: Rollup[]): Promise<Map<string, Rollup>> {
	const found = new Map<string, Rollup>();
	for (const part of chunks(keys, ROLLUP_ROWS_PER_STATEMENT)) {
		// Casts: a bare parameter inside a row constructor would reach the server untyped.
		const pairs = sql.join(
			part.map((k) => sql`(${k.resolution_s}::integer, ${k.bucket_t}::bigint)`),
			sql`, `
		);
		const rows = await tx
			.select()
			.from(frameRollups)
			.where(and(eq(frameRollups.runId, runId), sql`(${frameRollups.resolutionS}, ${frameRollups.bucketT}) in (${pairs})`));
		for (const row of rows) {
			const r = rowToRollup(row);
			found.set(rollupKey(r), r);
		}
	}
	return found;
}

/** `excluded.<column>` for every column but the key: the upsert replaces the whole row. */
const replaceAll: Record<string, SQL> = Object.fromEntries(
	Object.entries(getTableColumns(frameRollups))
		.filter(([, col]) => !['run_id', 'resolution_s', 'bucket_t'].includes(col.name))
		.map(([prop, col]) => [prop, sql.raw(`excluded."${col.name}"`)])
);

/**
 * The rows that adding `deltas` to the run's stored rollups gives: stored rows come from the
 * cache when it holds them, else from one read. Changes nothing (neither the database nor the
 * cache), so a caller can write the rows in any transaction and retry it; after the commit it
 * calls `cache.remember` on the rows.
 */
export async function mergeWithStored(db: Db, runId: string, deltas: Rollup[], cache?: RollupCache): Promise<Rollup[]> {
	// Deltas of one key are summed first: one upsert may not touch a row twice.
	const combined = new Map<string, Rollup>();
	for (const d of deltas) {
		const key = rollupKey(d);
		const prev = combined.get(key);
		combined.set(key, prev ? mergeRollups(prev, d) : d);
	}
	if (combined.size === 0) return [];

	const stored = new Map<string, Rollup>();
	const missing: Rollup[] = [];
	for (const [key, d] of combined) {
		const held = cache?.get(d.resolution_s, d.bucket_t);
		if (held) stored.set(key, held);
		else missing.push(d);
	}
	if (missing.length > 0) for (const [key, r] of await selectStored(db, runId, missing)) stored.set(key, r);

	// Sorted so that concurrent writers would take row locks in one order.
	return [...combined.entries()]
		.map(([key, d]) => {
			const prev = stored.get(key);
			return prev ? mergeRollups(prev, d) : d;
		})
		.sort((a, b) => a.resolution_s - b.resolution_s || a.bucket_t - b.bucket_t);
}

/** Stores merged rows (from mergeWithStored), replacing what is there. */
export async function upsertRollups(tx: Db, runId: string, merged: Rollup[]): Promise<void> {
	for (const part of chunks(merged, ROLLUP_ROWS_PER_STATEMENT)) {
		await tx
			.insert(frameRollups)
			.values(part.map((r) => rollupToRow(runId, r)))
			.onConflictDoUpdate({ target: [frameRollups.runId, frameRollups.resolutionS, frameRollups.bucketT], set: replaceAll });
	}
}

/**
 * Adds rollup deltas to the run's stored rows. Call it inside the transaction that stores the
 * frames the deltas came from (and only with frames that were actually inserted), so rollups and
 * frames commit or roll back together.
 */
export async function writeRollups(tx: Db, runId: string, deltas: Rollup[], cache?: RollupCache): Promise<void> {
	const merged = await mergeWithStored(tx, runId, deltas, cache);
	if (merged.length === 0) return;
	await upsertRollups(tx, runId, merged);
	if (cache) for (const r of merged) cache.remember(r);
}

/**
 * Predicted counts per frame from the setup's CURRENT rate models. A rebuild therefore predicts
 * with today's model, while the live rollups summed the predictions of the model in force when
 * each frame arrived: after a model change the two differ in expectedSwitches/expectedEscapes.
 */
export async function currentExpectedOf(db: Db, runId: string): Promise<ExpectedOf> {
	const [run] = await db.select().from(runs).where(eq(runs.id, runId));
	if (!run) throw new RangeError(`rollups: no run with id ${runId}`);
	const rates = compileRates(parseRunInfo(await runInfoFor(db, run)));
	if (!rates.switching && !rates.escape) return () => null;
	return (frame) => {
		const e = expectFrame(frame, rates);
		return { switches: e.switching?.expected ?? null, escapes: e.escape?.expected ?? null };
	};
}

export type RebuildProgress = { runId: string; framesDone: number; framesTotal: number };

/**
 * Replaces a run's rollups with ones recomputed from its stored frames, a page at a time (one
 * transaction per page) so memory stays bounded on long runs. `expectedOf` defaults to the
 * setup's current rate models (see currentExpectedOf). Frames that raw retention already deleted
 * are gone from the result, so callers check that first (see storedFrameShortfall). Not atomic as a
 * whole: a rebuild that fails part-way leaves the run with partial rollups; run it again.
 */
export async function rebuildRollups(
	db: Db,
	runId: string,
	expectedOf?: ExpectedOf,
	onProgress?: (p: RebuildProgress) => void,
	pageSize = FRAME_PAGE_ROWS
): Promise<{ frames: number; rows: number }> {
	const expect = expectedOf ?? (await currentExpectedOf(db, runId));
	const [{ total }] = await db.select({ total: count() }).from(frames).where(eq(frames.runId, runId));
	await db.delete(frameRollups).where(eq(frameRollups.runId, runId));
	const cache = new RollupCache();
	let done = 0;
	for await (const page of framePages(db, runId, { pageSize })) {
		const pageFrames = page.map((s) => s.frame);
		const deltas = rollupFrames(pageFrames, (f, i) => expect(f, done + i));
		await db.transaction(async (tx) => {
			await writeRollups(tx as unknown as Db, runId, deltas, cache);
		});
		done += page.length;
		onProgress?.({ runId, framesDone: done, framesTotal: Math.max(total, done) });
	}
	const [{ rows }] = await db.select({ rows: count() }).from(frameRollups).where(eq(frameRollups.runId, runId));
	return { frames: done, rows };
}

/**
 * How many of the run's committed frames are no longer stored (raw retention deletes frames but
 * never rollups): a rebuild would drop them from the rollups. 0 when all are there.
 */
export async function storedFrameShortfall(db: Db, runId: string): Promise<number> {
	const [run] = await db.select({ frameCount: runs.frameCount }).from(runs).where(eq(runs.id, runId));
	if (!run) throw new RangeError(`rollups: no run with id ${runId}`);
	const [{ stored }] = await db.select({ stored: count() }).from(frames).where(eq(frames.runId, runId));
	return Math.max(0, run.frameCount - stored);
}

/**
 * A run's rollups at one resolution in bucket order; with fromT/toT (agent ms) only the buckets
 * that overlap [fromT, toT], including the one already under way at fromT. With `limit`, the
 * first `limit` of those buckets.
 */
export async function readRollups(
	db: Db,
	runId: string,
	resolution_s: number,
	fromT?: number,
	toT?: number,
	limit?: number
): Promise<Rollup[]> {
	const where: SQL[] = [eq(frameRollups.runId, runId), eq(frameRollups.resolutionS, resolution_s)];
	if (fromT !== undefined) where.push(gte(frameRollups.bucketT, bucketStart(fromT, resolution_s)));
	if (toT !== undefined) where.push(lte(frameRollups.bucketT, toT));
	const query = db
		.select()
		.from(frameRollups)
		.where(and(...where))
		.orderBy(asc(frameRollups.bucketT));
	const rows = limit === undefined ? await query : await query.limit(limit);
	return rows.map(rowToRollup);
}
