// The span summary from covering rollup buckets equals sums over the frames themselves; time
// locked, lost data and the occupancy test on hand-worked cases.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../../src/lib/protocol/frame';
import { ROLLUP_RESOLUTIONS_S, rollupFrames } from '../../../src/lib/rollup/rollup';
import { lostData } from '../../../src/lib/summary/lost-data';
import { occupancySummary } from '../../../src/lib/summary/occupancy';
import { coverSpan } from '../../../src/lib/summary/span-cover';
import { summarize, transitionMatrix } from '../../../src/lib/summary/summary';
import { timeLocked } from '../../../src/lib/summary/time-locked';

const K = 3;
const T0 = 1_796_000_000_000;

function makeFrames(steps: { dt_ms: number; lock: number; switches: number; escapes: number; counts: number[] }[]): Frame[] {
	let t = T0;
	return steps.map((s, i) => {
		t += s.dt_ms;
		return {
			seq: i + 1,
			t,
			window_s: 1,
			shots: s.counts.reduce((a, b) => a + b, 0) + 5,
			vacuum: 5,
			counts: s.counts,
			lock: s.lock,
			switches: s.switches,
			dwell_s: 0.9,
			escapes: s.escapes,
			vacuum_s: 0.1,
			transitions: [0, s.switches, 0, 0, 0, 0, 0, 0, 0]
		};
	});
}

const step = fc.record({
	dt_ms: fc.integer({ min: 200, max: 400_000 }),
	lock: fc.double({ min: 0, max: 1, noNaN: true }),
	switches: fc.integer({ min: 0, max: 9 }),
	escapes: fc.integer({ min: 0, max: 3 }),
	counts: fc.array(fc.integer({ min: 0, max: 50 }), { minLength: K, maxLength: K })
});

describe('summarize over a cover of rollups', () => {
	it('adds up to the frames whose time falls in the covered span', () => {
		fc.assert(
			fc.property(
				fc.array(step, { minLength: 1, maxLength: 120 }),
				fc.double({ min: 0, max: 1, noNaN: true }),
				fc.double({ min: 0, max: 1, noNaN: true }),
				(steps, a, b) => {
					const frames = makeFrames(steps);
					const last = frames.at(-1)!.t;
					const from = T0 + Math.min(a, b) * (last - T0);
					const to = T0 + Math.max(a, b) * (last - T0) + 1;
					const all = rollupFrames(frames, () => ({ switches: 0.5, escapes: null }), ROLLUP_RESOLUTIONS_S);
					const cover = coverSpan(from, to, ROLLUP_RESOLUTIONS_S);
					// What readRollups(db, run, res, piece.from, piece.to − 1) returns for each piece.
					const buckets = cover.pieces.flatMap((p) =>
						all.filter((r) => r.resolution_s === p.resolution_s && r.bucket_t >= p.from_ms && r.bucket_t <= p.to_ms - 1)
					);
					const s = summarize({
						runId: 'r',
						states: K,
						span: { from_ms: from, to_ms: to },
						covered: { from_ms: cover.from_ms, to_ms: cover.to_ms },
						buckets,
						lockThreshold: 0.5,
						expectedPairs: 'all',
						symmetric: true,
						gaps: [],
						incidents: []
					});
					const inside = frames.filter((f) => f.t >= cover.from_ms && f.t < cover.to_ms);
					expect(s.exposure.frames).toBe(inside.length);
					expect(s.switching.count).toBe(inside.reduce((n, f) => n + f.switches, 0));
					expect(s.escape.count).toBe(inside.reduce((n, f) => n + f.escapes, 0));
					expect(s.exposure.dwell_s).toBeCloseTo(inside.length * 0.9, 6);
					expect(s.occupancy.counts).toEqual([0, 1, 2].map((i) => inside.reduce((n, f) => n + f.counts[i], 0)));
					expect(s.switching.expected ?? 0).toBeCloseTo(inside.length * 0.5, 6);
					if (inside.length) expect(s.transitions!.counts[0][1]).toBe(s.switching.count);
					const lockedExact = inside.filter((f) => f.lock >= 0.5).length;
					expect(s.timeLocked.locked_s_min).toBeLessThanOrEqual(lockedExact + 1e-9);
					expect(s.timeLocked.locked_s_max).toBeGreaterThanOrEqual(lockedExact - 1e-9);
				}
			),
			{ numRuns: 150 }
		);
	});
});

describe('timeLocked', () => {
	it('counts whole buckets above and below the threshold, and ranges the straddling ones', () => {
		const r = timeLocked(
			[
				{ bucket_t: 0, resolution_s: 10, window_s: 10, lockMin: 0.8, lockMax: 0.9 },
				{ bucket_t: 10_000, resolution_s: 10, window_s: 10, lockMin: 0.1, lockMax: 0.4 },
				{ bucket_t: 20_000, resolution_s: 10, window_s: 10, lockMin: 0.2, lockMax: 0.9 },
				{ bucket_t: 30_000, resolution_s: 10, window_s: 10, lockMin: 0.2, lockMax: 0.9, locked_s: 4 }
			],
			0.5
		);
		expect(r.data_s).toBe(40);
		expect(r.locked_s_min).toBe(14);
		expect(r.locked_s_max).toBe(24);
		expect(r.fraction_min).toBeCloseTo(0.35, 12);
		expect(r.undecided_buckets).toBe(1);
		// The threshold itself counts as locked (lock ≥ threshold).
		expect(timeLocked([{ bucket_t: 0, resolution_s: 10, window_s: 5, lockMin: 0.5, lockMax: 0.5 }], 0.5).locked_s_min).toBe(5);
		expect(() => timeLocked([], 2)).toThrow(/threshold/);
	});
});

describe('lostData', () => {
	it('places each gap between its neighbours and clips it to the span', () => {
		const gaps = [
			{ fromSeq: 11, toSeq: 20, before: { t_ms: 10_000, window_s: 1 }, after_t_ms: 21_000 },
			{ fromSeq: 31, toSeq: 31, before: { t_ms: 30_000, window_s: 1 }, after_t_ms: 32_000 },
			{ fromSeq: 50, toSeq: 60, before: null, after_t_ms: 61_000 }
		];
		const all = lostData(gaps, 0, 100_000);
		expect(all.frames).toBe(11);
		expect(all.seconds).toBe(11);
		expect(all.stretches[0]).toMatchObject({ from_ms: 11_000, to_ms: 21_000, seconds: 10 });
		const clipped = lostData(gaps, 15_000, 31_500);
		expect(clipped.seconds).toBe(6 + 0.5);
		expect(lostData(gaps, 40_000, 50_000).stretches).toEqual([]);
	});
});

describe('occupancySummary', () => {
	it('tests equal filling with the transitions the span saw', () => {
		// Two states, 400 switches each way: about 800 independent episodes, so 50.5 % against 49.5 % is
		// well within chance while 70 % against 30 % is not.
		const transitions = [0, 400, 400, 0];
		const even = occupancySummary({
			counts: [50_500, 49_500],
			escapes: 0,
			transitions,
			bucketCounts: [],
			expectedPairs: 'all',
			symmetric: true
		});
		expect(even.test!.method).toBe('observed transitions');
		expect(even.test!.pValue).toBeGreaterThan(0.5);
		const skewed = occupancySummary({
			counts: [70_000, 30_000],
			escapes: 0,
			transitions,
			bucketCounts: [],
			expectedPairs: 'all',
			symmetric: true
		});
		expect(skewed.test!.pValue).toBeLessThan(1e-6);
		expect(skewed.fractions).toEqual([0.7, 0.3]);
	});

	it('falls back to batch means without transitions and says why when it cannot test', () => {
		const rows = Array.from({ length: 40 }, (_, i) => (i % 2 ? [52, 48] : [47, 53]));
		const bm = occupancySummary({
			counts: [1980, 2020],
			escapes: 0,
			transitions: null,
			bucketCounts: rows,
			expectedPairs: 'all',
			symmetric: true
		});
		expect(bm.test!.method).toBe('batch means');
		expect(bm.test!.dof).toBe(9);
		const few = occupancySummary({
			counts: [10, 10],
			escapes: 0,
			transitions: null,
			bucketCounts: [[10, 10]],
			expectedPairs: 'all',
			symmetric: true
		});
		expect(few.test).toBeNull();
		expect(few.untested).toMatch(/too few/);
		expect(
			occupancySummary({ counts: [1, 2], escapes: 0, transitions: null, bucketCounts: [], expectedPairs: 'all', symmetric: false }).untested
		).toMatch(/symmetric/);
	});
});

describe('transitionMatrix', () => {
	it('reads the flat K·K list as rows from, columns to', () => {
		expect(transitionMatrix([0, 1, 2, 3], 2)).toEqual({
			states: 2,
			counts: [
				[0, 1],
				[2, 3]
			],
			total: 6
		});
		expect(() => transitionMatrix([1, 2, 3], 2)).toThrow(/4 entries/);
	});
});
