// The cover of a span by nested rollup buckets: the pieces tile the widened span exactly, each is
// whole buckets of its resolution, and coarse buckets take the interior.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { coverSpan } from '../../../src/lib/summary/span-cover';

const RES = [10, 60, 600, 3600];

describe('coverSpan', () => {
	it('tiles the span widened to 10 s edges with whole buckets', () => {
		fc.assert(
			fc.property(fc.integer({ min: 0, max: 10 * 86_400_000 }), fc.integer({ min: 1, max: 3 * 86_400_000 }), (from, len) => {
				const c = coverSpan(from, from + len, RES);
				expect(c.from_ms).toBe(Math.floor(from / 10_000) * 10_000);
				expect(c.to_ms).toBe(Math.ceil((from + len) / 10_000) * 10_000);
				let at = c.from_ms;
				for (const p of c.pieces) {
					expect(p.from_ms).toBe(at);
					expect(p.to_ms).toBeGreaterThan(p.from_ms);
					expect(p.from_ms % (p.resolution_s * 1000)).toBe(0);
					expect(p.to_ms % (p.resolution_s * 1000)).toBe(0);
					at = p.to_ms;
				}
				expect(at).toBe(c.to_ms);
				// At most two ragged pieces per finer level beside the coarse middle.
				expect(c.pieces.length).toBeLessThanOrEqual(2 * RES.length - 1);
			})
		);
	});

	it('uses the hour buckets for a span of whole hours', () => {
		const c = coverSpan(3_600_000 * 5, 3_600_000 * 8, RES);
		expect(c.pieces).toEqual([{ resolution_s: 3600, from_ms: 18_000_000, to_ms: 28_800_000 }]);
		const ragged = coverSpan(3_600_000 * 5 - 70_000, 3_600_000 * 5 + 20_000, RES);
		expect(ragged.pieces.map((p) => p.resolution_s)).toEqual([10, 60, 10]);
	});

	it('refuses an empty or reversed span and resolutions that do not nest', () => {
		expect(() => coverSpan(10, 10, RES)).toThrow(/after from_ms/);
		expect(() => coverSpan(0, 1000, [10, 25])).toThrow(/multiple/);
	});
});
