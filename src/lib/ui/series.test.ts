// Checks of the run page's client-side series against values computed independently in the test.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { mean } from 'simple-statistics';
import { gapSpan_ms, mergeFrames, missingRanges, occupancyFromFrames, pooledRate_per_s, rollingMean, switchingRate_per_s } from './series';
import { hue } from './hue';
import { formatDuration, formatRate } from './format';
import type { Frame } from './types';

function frame(seq: number, over: Partial<Frame> = {}): Frame {
	return {
		seq,
		t: 1_700_000_000_000 + seq * 1000,
		window_s: 1,
		shots: 100,
		vacuum: 10,
		counts: [30, 30, 30],
		lock: 0.9,
		switches: seq % 4,
		dwell_s: 0.9,
		escapes: 0,
		vacuum_s: 0.1,
		...over
	};
}

describe('rollingMean', () => {
	it('equals the mean of the defined values in each trailing window (reference: simple-statistics mean)', () => {
		fc.assert(
			fc.property(
				fc.array(fc.option(fc.double({ min: -1e3, max: 1e3, noNaN: true }), { nil: null }), { maxLength: 60 }),
				fc.integer({ min: 1, max: 12 }),
				(values, n) => {
					const got = rollingMean(values, n);
					values.forEach((_, i) => {
						const window = values.slice(Math.max(0, i - n + 1), i + 1).filter((v): v is number => v !== null);
						if (window.length === 0) expect(got[i]).toBeNull();
						else expect(got[i]).toBeCloseTo(mean(window), 6);
					});
				}
			),
			{ seed: 11, numRuns: 200 }
		);
	});

	it('rejects a window that is not a positive integer', () => {
		expect(() => rollingMean([1, 2], 0)).toThrow(/positive integer/);
	});
});

describe('pooledRate_per_s', () => {
	it('is total switches over total dwell time of the trailing windows (ratio of sums, computed here directly)', () => {
		const frames = [1, 2, 3, 4, 5, 6].map((s) => frame(s, { switches: s * 2, dwell_s: 0.5 + s / 10 }));
		const got = pooledRate_per_s(frames, 3);
		for (let i = 0; i < frames.length; i++) {
			const w = frames.slice(Math.max(0, i - 2), i + 1);
			const expected = w.reduce((a, f) => a + f.switches, 0) / w.reduce((a, f) => a + f.dwell_s, 0);
			expect(got[i]).toBeCloseTo(expected, 12);
		}
	});

	it('has no value while no time was spent in phase states', () => {
		expect(pooledRate_per_s([frame(1, { switches: 0, dwell_s: 0 })], 5)).toEqual([null]);
		expect(switchingRate_per_s({ switches: 3, dwell_s: 0 })).toBeNull();
		expect(switchingRate_per_s({ switches: 3, dwell_s: 1.5 })).toBe(2);
	});
});

describe('mergeFrames', () => {
	it('keeps each seq once, in order, and only the newest `cap`', () => {
		fc.assert(
			fc.property(
				fc.uniqueArray(fc.integer({ min: 1, max: 200 }), { maxLength: 80 }),
				fc.array(fc.integer({ min: 1, max: 200 }), { maxLength: 80 }),
				fc.integer({ min: 1, max: 100 }),
				(a, b, cap) => {
					const existing = [...a].sort((x, y) => x - y).map((s) => frame(s));
					const merged = mergeFrames(
						existing,
						b.map((s) => frame(s)),
						cap
					);
					const union = [...new Set([...a, ...b])].sort((x, y) => x - y);
					expect(merged.map((f) => f.seq)).toEqual(union.slice(Math.max(0, union.length - cap)));
				}
			),
			{ seed: 5, numRuns: 200 }
		);
	});
});

describe('occupancy and gaps', () => {
	it('sums counts, vacuum and shots over the newest windows', () => {
		const frames = [1, 2, 3].map((s) => frame(s, { counts: [s, 2 * s, 0], vacuum: s, shots: 10 * s }));
		expect(occupancyFromFrames(frames, 3, 2)).toEqual({ counts: [5, 10, 0], vacuum: 5, shots: 50, fromSeq: 2, toSeq: 3 });
		expect(occupancyFromFrames([], 3)).toBeNull();
	});

	it('finds missing seq ranges and their time span between the windows around them', () => {
		const frames = [1, 2, 6, 7, 9].map((s) => frame(s));
		expect(missingRanges(frames)).toEqual([
			{ fromSeq: 3, toSeq: 5 },
			{ fromSeq: 8, toSeq: 8 }
		]);
		// The gap 3–5 starts where window 2 ended and ends where window 6 began (1 s windows).
		expect(gapSpan_ms(frames, { fromSeq: 3, toSeq: 5 })).toEqual([frame(2).t, frame(6).t - 1000]);
		expect(gapSpan_ms(frames, { fromSeq: 10, toSeq: 12 })).toBeNull();
	});
});

describe('hue and formatting', () => {
	it('spaces phase states evenly around the wheel: state i of K at 360·i/K degrees (DESIGN.md, look and feel)', () => {
		expect([0, 1, 2, 3, 4, 5].map((i) => hue(i, 6))).toEqual([0, 60, 120, 180, 240, 300]);
		expect(hue(1, 2)).toBe(180);
		expect(() => hue(0, 0)).toThrow(/K must be a positive integer/);
	});

	it('writes rates in plain or scientific notation (common practice: three significant figures)', () => {
		expect(formatRate(29.314)).toBe('29.3');
		expect(formatRate(0.000321)).toBe('3.21 × 10⁻⁴');
		expect(formatRate(123456)).toBe('1.23 × 10⁵');
		expect(formatRate(null)).toBe('—');
	});

	it('writes durations in their two largest units', () => {
		expect(formatDuration(42)).toBe('42 s');
		expect(formatDuration(185)).toBe('3 min 05 s');
		expect(formatDuration(2 * 3600 + 14 * 60 + 3)).toBe('2 h 14 min');
		expect(formatDuration(3 * 86400 + 4 * 3600)).toBe('3 d 4 h');
	});
});
