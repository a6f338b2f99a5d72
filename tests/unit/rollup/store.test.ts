// Stored rollups (a real PGlite in memory, with the project's migrations) against the same
// independent aggregation as the pure tests: batches written through writeRollups with and without
// a cache, late frames landing in old buckets, and a rebuild from the frames table.
import { randomUUID } from 'node:crypto';
import type { PGlite } from '@electric-sql/pglite';
import { eq } from 'drizzle-orm';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { Frame } from '../../../src/lib/protocol/frame';
import { ROLLUP_RESOLUTIONS_S, rollupFrames, type Rollup } from '../../../src/lib/rollup/rollup';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { frameRollups, frames, rateModels, runs, setups } from '../../../src/lib/server/db/schema';
import { frameToRow } from '../../../src/lib/server/ingest/frame-rows';
import {
	readRollups,
	rebuildRollups,
	RollupCache,
	rollupToRow,
	rowToRollup,
	storedFrameShortfall,
	writeRollups
} from '../../../src/lib/server/rollups/store';
import { bruteForce, expectSameRollups, permute, splitAt, streamArb, T0_MS, type Stream } from './streams';

vi.setConfig({ testTimeout: 120_000 });

let db: Db;
let close: () => Promise<void>;

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	// Starting PGlite and migrating takes seconds on a busy machine.
}, 120_000);
afterAll(async () => {
	await close();
});

async function newRun(states: number): Promise<string> {
	const setupId = randomUUID();
	await db.insert(setups).values({ id: setupId, name: `line ${setupId}`, order: 2, states, modeGHz: 5.1, nominalMK: 20 });
	const runId = randomUUID();
	await db.insert(runs).values({ id: runId, setupId, key: 'k', name: 'cooldown 7', order: 2, states, modeGHz: 5.1 });
	return runId;
}

async function allStored(runId: string): Promise<Rollup[]> {
	const out: Rollup[] = [];
	for (const res of ROLLUP_RESOLUTIONS_S) out.push(...(await readRollups(db, runId, res)));
	return out;
}

const expectedOfStream = (stream: Stream) => (f: Frame) => stream.expected.get(f.seq) ?? null;

describe('writeRollups', () => {
	it('stores what a brute-force aggregation of all frames gives, whatever the batches and their order', async () => {
		await fc.assert(
			fc.asyncProperty(
				streamArb(40),
				fc.array(fc.nat(1000), { maxLength: 6 }),
				fc.array(fc.nat(1000), { maxLength: 20 }),
				fc.boolean(),
				async (stream, cuts, orderKeys, withCache) => {
					const runId = await newRun(stream.states);
					const expectedOf = expectedOfStream(stream);
					// Shuffled batches: some arrive after later ones (late frames into old buckets).
					const batches = permute(splitAt(stream.frames, cuts), orderKeys);
					const cache = withCache ? new RollupCache() : undefined;
					for (const batch of batches) {
						await db.transaction(async (tx) => {
							await writeRollups(tx as unknown as Db, runId, rollupFrames(batch, expectedOf), cache);
						});
					}
					expectSameRollups(await allStored(runId), bruteForce(stream.frames, expectedOf, ROLLUP_RESOLUTIONS_S));
				}
			),
			{ numRuns: 25 }
		);
	});

	it('merges deltas of one key given in a single call, and a cache that holds the newest bucket', async () => {
		const runId = await newRun(2);
		const f = (seq: number, t: number): Frame => ({
			seq,
			t,
			window_s: 1,
			shots: 10,
			vacuum: 1,
			counts: [4, 5],
			lock: 0.5 + seq / 100,
			switches: 1,
			dwell_s: 0.9,
			escapes: 0,
			vacuum_s: 0.1
		});
		const cache = new RollupCache();
		const deltas = [...rollupFrames([f(1, T0_MS + 1000)], () => null, [10]), ...rollupFrames([f(2, T0_MS + 2000)], () => null, [10])];
		await writeRollups(db, runId, deltas, cache);
		expect(cache.get(10, T0_MS)?.frames).toBe(2);
		// A bucket further on becomes the cached one; the older one is read back from the table.
		await writeRollups(
			db,
			runId,
			rollupFrames([f(3, T0_MS + 12_000)], () => null, [10]),
			cache
		);
		expect(cache.get(10, T0_MS)).toBeUndefined();
		expect(cache.get(10, T0_MS + 10_000)?.frames).toBe(1);
		await writeRollups(
			db,
			runId,
			rollupFrames([f(4, T0_MS + 3000)], () => null, [10]),
			cache
		);
		const stored = await readRollups(db, runId, 10);
		expect(stored.map((r) => [r.bucket_t, r.frames, r.firstSeq, r.lastSeq])).toEqual([
			[T0_MS, 3, 1, 4],
			[T0_MS + 10_000, 1, 3, 3]
		]);
		// Only buckets overlapping the range, including the one under way at fromT.
		expect((await readRollups(db, runId, 10, T0_MS + 11_000, T0_MS + 20_000)).map((r) => r.bucket_t)).toEqual([T0_MS + 10_000]);
		expect(await readRollups(db, runId, 60)).toEqual([]);
		// With a limit, the first buckets of the range in order.
		expect((await readRollups(db, runId, 10, undefined, undefined, 1)).map((r) => r.bucket_t)).toEqual([T0_MS]);
		expect((await readRollups(db, runId, 10, T0_MS, undefined, 5)).map((r) => r.bucket_t)).toEqual([T0_MS, T0_MS + 10_000]);
	});

	it('reads all missing buckets in one SELECT and writes all rows in one upsert', async () => {
		const runId = await newRun(2);
		const f = (seq: number, t: number): Frame => ({
			seq,
			t,
			window_s: 1,
			shots: 10,
			vacuum: 1,
			counts: [4, 5],
			lock: 0.7,
			switches: 1,
			dwell_s: 0.9,
			escapes: 0,
			vacuum_s: 0.1
		});
		const batch = [f(1, T0_MS + 1000), f(2, T0_MS + 15_000), f(3, T0_MS + 70_000), f(4, T0_MS + 700_000)];
		await writeRollups(
			db,
			runId,
			rollupFrames(batch.slice(0, 2), () => null)
		);
		// drizzle's PGlite driver sends every statement through the client's query().
		const spy = vi.spyOn((db as Db & { $client: PGlite }).$client, 'query');
		try {
			await writeRollups(
				db,
				runId,
				rollupFrames(batch, () => null)
			);
			const statements = spy.mock.calls.map(([text]: [string, ...unknown[]]) => String(text).trim().split(/\s+/)[0].toLowerCase());
			expect(statements).toEqual(['select', 'insert']);
			expect(String(spy.mock.calls[1][0])).toMatch(/on conflict \("run_id", ?"resolution_s", ?"bucket_t"\) do update set/i);
		} finally {
			spy.mockRestore();
		}
		const tens = await readRollups(db, runId, 10);
		expect(tens.map((r) => [r.bucket_t - T0_MS, r.frames])).toEqual([
			[0, 2],
			[10_000, 2],
			[70_000, 1],
			[700_000, 1]
		]);
	});

	it('maps rows and rollups both ways without loss', async () => {
		await fc.assert(
			fc.asyncProperty(streamArb(10), async (stream) => {
				const runId = await newRun(stream.states);
				const deltas = rollupFrames(stream.frames, expectedOfStream(stream));
				await db.insert(frameRollups).values(deltas.map((r) => rollupToRow(runId, r)));
				const rows = await db.select().from(frameRollups).where(eq(frameRollups.runId, runId));
				const back = rows.map(rowToRollup).sort((a, b) => a.resolution_s - b.resolution_s || a.bucket_t - b.bucket_t);
				expect(back).toEqual(deltas);
			}),
			{ numRuns: 10 }
		);
	});
});

describe('rebuildRollups', () => {
	it('recomputes from the frames table, page by page, the rows the live writes stored', async () => {
		await fc.assert(
			fc.asyncProperty(streamArb(40), fc.integer({ min: 1, max: 9 }), async (stream, pageSize) => {
				const runId = await newRun(stream.states);
				const expectedOf = expectedOfStream(stream);
				await db.insert(frames).values(stream.frames.map((f) => frameToRow(runId, f)));
				// Stale rows the rebuild must replace, not add to.
				await writeRollups(db, runId, rollupFrames(stream.frames.slice(0, 3), expectedOf));
				const progress: number[] = [];
				const result = await rebuildRollups(
					db,
					runId,
					(f) => expectedOf(f),
					(p) => {
						expect(p.framesTotal).toBe(stream.frames.length);
						progress.push(p.framesDone);
					},
					pageSize
				);
				expect(result.frames).toBe(stream.frames.length);
				expect(progress.at(-1)).toBe(stream.frames.length);
				const stored = await allStored(runId);
				expect(result.rows).toBe(stored.length);
				expectSameRollups(stored, bruteForce(stream.frames, expectedOf, ROLLUP_RESOLUTIONS_S));
			}),
			{ numRuns: 15 }
		);
	});

	it('predicts with the setup’s current rate model when no expectedOf is given', async () => {
		const runId = await newRun(2);
		const [run] = await db.select().from(runs).where(eq(runs.id, runId));
		// A = 0 makes the rate temperature-independent: W0 × dwell_s exactly (activation law W0·e^{−A·…}).
		await db.insert(rateModels).values({
			setupId: run.setupId,
			process: 'switching',
			model: { process: 'switching', W0_per_s: 2, A: 0, mode_GHz: 5, nominal_mK: 20 }
		});
		const base = { window_s: 1, shots: 10, vacuum: 1, counts: [4, 5], lock: 0.9, switches: 1, escapes: 0, vacuum_s: 0.1 };
		const stored: Frame[] = [
			{ ...base, seq: 1, t: T0_MS + 1000, dwell_s: 0.5 },
			{ ...base, seq: 2, t: T0_MS + 2000, dwell_s: 0.25 }
		];
		await db.insert(frames).values(stored.map((f) => frameToRow(runId, f)));
		await rebuildRollups(db, runId);
		const [r] = await readRollups(db, runId, 10);
		expect(r.expectedSwitches).toBeCloseTo(2 * (0.5 + 0.25), 12);
		expect(r.expectedEscapes).toBeNull();
	});

	it('reports frames that raw retention deleted, which a rebuild would lose', async () => {
		const runId = await newRun(2);
		await db.update(runs).set({ frameCount: 5 }).where(eq(runs.id, runId));
		const f: Frame = {
			seq: 1,
			t: T0_MS,
			window_s: 1,
			shots: 1,
			vacuum: 0,
			counts: [1, 0],
			lock: 1,
			switches: 0,
			dwell_s: 1,
			escapes: 0,
			vacuum_s: 0
		};
		await db.insert(frames).values([frameToRow(runId, f)]);
		expect(await storedFrameShortfall(db, runId)).toBe(4);
		await expect(storedFrameShortfall(db, 'no-such-run')).rejects.toThrow(/no run with id no-such-run/);
		await expect(rebuildRollups(db, 'no-such-run')).rejects.toThrow(/no run with id no-such-run/);
	});
});
