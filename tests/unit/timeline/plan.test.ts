// Resolution choice: the coarsest rollup not wider than span/N, buckets that fit N and cover the span.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkPoints, planTimeline, TimelineRangeError } from '../../../src/lib/timeline/plan';

const HOUR_MS = 3_600_000;
const T0 = 1_704_067_200_000; // an hour boundary

describe('planTimeline', () => {
	it('reads frames for an hour at 1000 points (10 s rollups would give only 360 buckets)', () => {
		const p = planTimeline(T0, T0 + HOUR_MS, 1000);
		expect(p).toMatchObject({ source: 'frames', rollup_s: null, width_s: 4, from_ms: T0, count: 900 });
		expect(p.to_ms).toBe(T0 + HOUR_MS);
	});

	it('merges 600 s rollups two by two for seven days at 1000 points', () => {
		// Ideal bucket 604.8 s: 600 s is the coarsest resolution not wider; one row per bucket would
		// need 1008 buckets, so two rows make each bucket.
		const p = planTimeline(T0, T0 + 7 * 24 * HOUR_MS, 1000);
		expect(p).toMatchObject({ source: 'rollups', rollup_s: 600, width_s: 1200, count: 504 });
	});

	it('uses 10 s, 60 s and 3600 s rollups where those are the coarsest fitting', () => {
		expect(planTimeline(T0, T0 + 3 * HOUR_MS, 1000)).toMatchObject({ rollup_s: 10, width_s: 20, count: 540 });
		expect(planTimeline(T0, T0 + 24 * HOUR_MS, 1000)).toMatchObject({ rollup_s: 60, width_s: 120, count: 720 });
		expect(planTimeline(T0, T0 + 90 * 24 * HOUR_MS, 1000)).toMatchObject({ rollup_s: 3600, width_s: 3 * 3600, count: 720 });
		expect(planTimeline(T0, T0 + 24 * HOUR_MS, 24)).toMatchObject({ rollup_s: 3600, width_s: 3600, count: 24 });
	});

	it('aligns buckets to the grid, so an unaligned span gets partial buckets at the ends', () => {
		const p = planTimeline(T0 + 1_500, T0 + 60_000 + 500, 6);
		// Ideal 9.83 s < 10 s: frames, 10 s buckets from T0 to T0+70 s would be 7; 11 s buckets fit.
		expect(p.source).toBe('frames');
		expect(p.count).toBeLessThanOrEqual(6);
		expect(p.from_ms).toBeLessThanOrEqual(T0 + 1_500);
		expect(p.to_ms).toBeGreaterThanOrEqual(T0 + 60_500);
	});

	it('for any span and N: at most N buckets, not much wider than the ideal, covering the span', () => {
		fc.assert(
			fc.property(
				fc.integer({ min: 0, max: 30 * 24 * HOUR_MS }),
				fc.integer({ min: 1, max: 200 * 24 * HOUR_MS }),
				fc.integer({ min: 1, max: 5000 }),
				(offset, span, points) => {
					const from = T0 + offset;
					const p = planTimeline(from, from + span, points);
					expect(p.count).toBeLessThanOrEqual(points);
					expect(p.from_ms).toBeLessThanOrEqual(from);
					expect(p.to_ms).toBeGreaterThanOrEqual(from + span);
					expect((p.to_ms - p.from_ms) / (p.width_s * 1000)).toBe(p.count);
					expect(p.from_ms % (p.width_s * 1000)).toBe(0);
					if (p.rollup_s !== null) expect(p.width_s % p.rollup_s).toBe(0);
					// Not needlessly coarse: alignment adds at most two buckets, so beyond a few points a
					// bucket stays within 1.25 ideal widths plus two rows (and so rows read ≤ ~10 per bucket).
					const base_ms = (p.rollup_s ?? 1) * 1000;
					if (points >= 10) expect(p.width_s * 1000).toBeLessThanOrEqual(1.25 * (span / points) + 2 * base_ms);
				}
			),
			{ numRuns: 500 }
		);
	});

	it('names the bad parameter', () => {
		expect(() => checkPoints(0)).toThrow(TimelineRangeError);
		expect(() => planTimeline(T0, T0 + 1000, 2.5)).toThrow(/points: must be a whole number/);
		expect(() => planTimeline(T0, T0 + 1000, 10_001)).toThrow(/points/);
		expect(() => planTimeline(T0, T0, 10)).toThrow(/to_ms: must be a time in ms after from_ms/);
		expect(() => planTimeline(Number.NaN, T0, 10)).toThrow(/from_ms/);
	});
});
