// The run's summed IQ histogram read from a real PGlite in memory (the project's migrations): the
// span selects by agent time, a long span is sampled evenly by seq and says so, and histograms on
// another grid are left out and counted. Expected sums are counted here from the rows inserted.
import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { frames, runs, setups } from '../../../src/lib/server/db/schema';
import { IQ_DEFAULT_SPAN_MS, IQ_FRAMES_MAX, runIq } from '../../../src/lib/server/runs/iq';

vi.setConfig({ testTimeout: 120_000 });

const T0 = 1_800_000_000_000;
let db: Db;
let close: () => Promise<void>;
const run = { id: randomUUID(), states: 2, lastFrameT: 0 };
const N = IQ_FRAMES_MAX * 2 + 500;

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	const setupId = randomUUID();
	await db.insert(setups).values({ id: setupId, name: 'iq line', order: 2, states: 2, modeGHz: 5.1, nominalMK: 20 });
	await db.insert(runs).values({ id: run.id, setupId, key: 'k', name: 'iq run', order: 2, states: 2, modeGHz: 5.1 });
	const rows = Array.from({ length: N }, (_, i) => {
		const seq = i + 1;
		// every 10th frame sends no histogram; seq 7 one on another grid
		const iq = seq % 10 === 0 ? null : seq === 7 ? { bins: 2, extent: 1, counts: [1, 1, 1, 1] } : { bins: 1, extent: 1, counts: [seq] };
		return {
			runId: run.id,
			seq,
			t: T0 + seq * 1000,
			windowS: 1,
			shots: 10,
			vacuum: 1,
			counts: [4, 5],
			lock: 0.9,
			switches: 0,
			dwellS: 1,
			escapes: 0,
			vacuumS: 0,
			iq
		};
	});
	for (let i = 0; i < rows.length; i += 500) await db.insert(frames).values(rows.slice(i, i + 500));
	run.lastFrameT = T0 + N * 1000;
}, 120_000);
afterAll(async () => {
	await close();
});

describe('runIq', () => {
	it('sums the histograms of the frames whose time falls in the span, with their occupancy', async () => {
		const got = await runIq(db, run, { from_ms: T0 + 101_000, to_ms: T0 + 200_000 });
		const seqs = Array.from({ length: 100 }, (_, i) => 101 + i).filter((s) => s % 10 !== 0);
		expect(got).toMatchObject({ framesWithIq: seqs.length, sampledEvery: 1, firstFrame_ms: T0 + 101_000, lastFrame_ms: T0 + 199_000 });
		expect(got.sum).toMatchObject({ bins: 1, frames: seqs.length, mismatched: 0, counts: [seqs.reduce((a, b) => a + b, 0)] });
		expect(got.occupancy).toMatchObject({ counts: [4 * seqs.length, 5 * seqs.length], vacuum: seqs.length, shots: 10 * seqs.length });
		expect(got.lobes).toHaveLength(2);
	});

	it('leaves a histogram on another grid out and counts it', async () => {
		const got = await runIq(db, run, { from_ms: T0, to_ms: T0 + 9_000 });
		// seq 1–9: seq 1 sets the grid, seq 7 is 2×2
		expect(got.sum).toMatchObject({ frames: 8, mismatched: 1, counts: [1 + 2 + 3 + 4 + 5 + 6 + 8 + 9] });
	});

	it('samples a long span evenly by seq, never adding more than the cap, and says every how many', async () => {
		const got = await runIq(db, run, { from_ms: T0, to_ms: run.lastFrameT });
		const withIq = Array.from({ length: N }, (_, i) => i + 1).filter((s) => s % 10 !== 0);
		expect(got.framesWithIq).toBe(withIq.length);
		const every = Math.ceil(withIq.length / IQ_FRAMES_MAX);
		expect(got.sampledEvery).toBe(every);
		const sampled = withIq.filter((s) => s % every === 0);
		expect(got.sum!.frames + got.sum!.mismatched).toBe(Math.min(IQ_FRAMES_MAX, sampled.length));
		expect(got.sum!.frames).toBeLessThanOrEqual(IQ_FRAMES_MAX);
	});

	it('without a span shows the last hour before the run’s last frame; a reversed span is refused', async () => {
		const got = await runIq(db, run);
		expect(got.from_ms).toBe(run.lastFrameT - IQ_DEFAULT_SPAN_MS);
		// the last hour holds more histograms than the cap, so it is sampled too
		const inHour = Array.from({ length: N }, (_, i) => i + 1).filter((s) => s % 10 !== 0 && T0 + s * 1000 >= got.from_ms);
		const every = Math.ceil(inHour.length / IQ_FRAMES_MAX);
		expect(got.sampledEvery).toBe(every);
		expect(got.lastFrame_ms).toBe(T0 + inHour.filter((s) => s % every === 0).at(-1)! * 1000);
		await expect(runIq(db, run, { from_ms: 5, to_ms: 1 })).rejects.toThrow(/from_ms \(5\) is after to_ms \(1\)/);
	});
});
