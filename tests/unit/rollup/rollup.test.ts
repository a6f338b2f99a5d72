// Rollups against an independent aggregation of the same frames, however the stream is cut into
// batches and in whatever order the batches' deltas are merged; plus small cases worked by hand.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../../src/lib/protocol/frame';
import { bucketStart, mergeRollups, ROLLUP_RESOLUTIONS_S, rollupFrames, rollupKey, type Rollup } from '../../../src/lib/rollup/rollup';
import { bruteForce, expectSameRollups, permute, splitAt, streamArb, T0_MS } from './streams';

function mergeAll(deltas: Rollup[]): Rollup[] {
	const byKey = new Map<string, Rollup>();
	for (const d of deltas) {
		const prev = byKey.get(rollupKey(d));
		byKey.set(rollupKey(d), prev ? mergeRollups(prev, d) : d);
	}
	return [...byKey.values()];
}

describe('rollupFrames and mergeRollups', () => {
	it('equal a brute-force aggregation for any batch split and any merge order', () => {
		fc.assert(
			fc.property(
				streamArb(),
				fc.array(fc.nat(1000), { maxLength: 8 }),
				fc.array(fc.nat(1000), { maxLength: 40 }),
				(stream, cuts, orderKeys) => {
					const expectedOf = (f: Frame) => stream.expected.get(f.seq) ?? null;
					const batches = permute(splitAt(stream.frames, cuts), orderKeys);
					const deltas = batches.flatMap((b) => rollupFrames(b, expectedOf));
					// The deltas of all batches, merged in a shuffled order as well.
					const merged = mergeAll(permute(deltas, [...orderKeys].reverse()));
					expectSameRollups(merged, bruteForce(stream.frames, expectedOf, ROLLUP_RESOLUTIONS_S));
				}
			),
			{ numRuns: 200 }
		);
	});

	it('gives one delta per touched bucket, sorted by resolution then bucket', () => {
		fc.assert(
			fc.property(streamArb(30), (stream) => {
				const out = rollupFrames(stream.frames, () => null);
				const keys = out.map(rollupKey);
				expect(new Set(keys).size).toBe(keys.length);
				const sorted = [...out].sort((a, b) => a.resolution_s - b.resolution_s || a.bucket_t - b.bucket_t);
				expect(out).toEqual(sorted);
				// Every frame is counted once at each resolution.
				for (const res of ROLLUP_RESOLUTIONS_S) {
					expect(out.filter((r) => r.resolution_s === res).reduce((n, r) => n + r.frames, 0)).toBe(stream.frames.length);
				}
			}),
			{ numRuns: 50 }
		);
	});
});

const frame = (over: Partial<Frame> & Pick<Frame, 'seq' | 't'>): Frame => ({
	window_s: 1,
	shots: 100,
	vacuum: 10,
	counts: [40, 50],
	lock: 0.9,
	switches: 3,
	dwell_s: 0.8,
	escapes: 1,
	vacuum_s: 0.1,
	...over
});

describe('worked by hand', () => {
	// Three 1 s windows ending at +3 s, +9.999 s and +10 s from a 10 s boundary: the first two share
	// the bucket [T0, T0+10 s), the third opens the next one.
	const a = frame({ seq: 7, t: T0_MS + 3_000, lock: 0.9, aux: { mxc_mK: 18, pump_dBm: -3 } });
	const b = frame({ seq: 9, t: T0_MS + 9_999, lock: 0.6, counts: [10, 70], aux: { mxc_mK: 22 }, transitions: [0, 2, 1, 0] });
	const c = frame({ seq: 10, t: T0_MS + 10_000, lock: 0.5 });
	const [first, second] = rollupFrames([a, b, c], (f) => (f.seq === 9 ? { switches: 2.5, escapes: null } : null), [10]);

	it('puts two frames in one 10 s bucket and the one at the boundary in the next', () => {
		expect(first.bucket_t).toBe(T0_MS);
		expect(second.bucket_t).toBe(T0_MS + 10_000);
		expect([first.frames, first.firstSeq, first.lastSeq]).toEqual([2, 7, 9]);
		expect([second.frames, second.firstSeq, second.lastSeq]).toEqual([1, 10, 10]);
		expect(first.shots).toBe(200);
		expect(first.counts).toEqual([50, 120]);
		expect(first.window_s).toBe(2);
		expect(first.switches).toBe(6);
	});

	it('keeps the lock range and a sum whose mean is (0.9 + 0.6) / 2 = 0.75', () => {
		expect(first.lockMin).toBe(0.6);
		expect(first.lockMax).toBe(0.9);
		expect(first.lockSum / first.frames).toBeCloseTo(0.75, 12);
		expect(second.lockSum / second.frames).toBe(0.5);
	});

	it('aggregates each aux name over the frames that carried it', () => {
		expect(first.aux).toEqual({ mxc_mK: { min: 18, max: 22, sum: 40, n: 2 }, pump_dBm: { min: -3, max: -3, sum: -3, n: 1 } });
		expect(second.aux).toEqual({});
	});

	it('sums transitions and predictions only where frames had them', () => {
		expect(first.transitions).toEqual([0, 2, 1, 0]);
		expect(second.transitions).toBeNull();
		expect(first.expectedSwitches).toBe(2.5);
		expect(first.expectedEscapes).toBeNull();
		expect(second.expectedSwitches).toBeNull();
	});

	it('buckets a fractional t as the frames table stores it (rounded to the ms)', () => {
		const [r] = rollupFrames([frame({ seq: 1, t: T0_MS - 0.4 })], () => null, [10]);
		expect(r.bucket_t).toBe(T0_MS);
		expect(bucketStart(T0_MS - 1, 10)).toBe(T0_MS - 10_000);
		expect(bucketStart(T0_MS + 3_599_999, 3600)).toBe(T0_MS);
	});
});

describe('bad input', () => {
	const one = (seq: number, t: number, counts = [1, 2]) => rollupFrames([frame({ seq, t, counts })], () => null, [60])[0];

	it('refuses to merge different buckets or resolutions', () => {
		expect(() => mergeRollups(one(1, T0_MS), one(2, T0_MS + 60_000))).toThrow(
			/cannot merge bucket 60:1704067200000 with bucket 60:1704067260000/
		);
		const other = { ...one(1, T0_MS), resolution_s: 10 };
		expect(() => mergeRollups(one(1, T0_MS), other)).toThrow(RangeError);
	});

	it('refuses to add counts of different lengths', () => {
		expect(() => mergeRollups(one(1, T0_MS), one(2, T0_MS, [1, 2, 3]))).toThrow(/counts have 2 and 3 entries/);
		expect(() => rollupFrames([frame({ seq: 1, t: T0_MS }), frame({ seq: 2, t: T0_MS, counts: [1] })], () => null)).toThrow(RangeError);
	});

	it('rejects a resolution that is not a positive whole number of seconds', () => {
		expect(() => bucketStart(T0_MS, 0)).toThrow(/resolution 0 s/);
		expect(() => bucketStart(T0_MS, 2.5)).toThrow(RangeError);
		expect(() => bucketStart(Number.NaN, 10)).toThrow(/not a finite number/);
	});
});
