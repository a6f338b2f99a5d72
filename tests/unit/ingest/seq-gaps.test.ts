import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { SeqGaps } from '../../../src/lib/server/ingest/seq-gaps';

const at = new Date(0);

describe('SeqGaps', () => {
	it('shrinks a gap from either end and splits it in the middle', () => {
		const gaps = new SeqGaps();
		gaps.add(3, 3, at);
		gaps.add(11, 2147483646, at);
		expect(gaps.fill(3)).toEqual({ removed: { fromSeq: 3, toSeq: 3, detectedAt: at }, added: [] });
		expect(gaps.fill(11)?.added).toEqual([{ fromSeq: 12, toSeq: 2147483646, detectedAt: at }]);
		expect(gaps.fill(20)?.added).toEqual([
			{ fromSeq: 12, toSeq: 19, detectedAt: at },
			{ fromSeq: 21, toSeq: 2147483646, detectedAt: at }
		]);
		expect(gaps.fill(20)).toBeNull();
		expect(gaps.fill(2)).toBeNull();
		expect(gaps.list().map((g) => [g.fromSeq, g.toSeq])).toEqual([
			[12, 19],
			[21, 2147483646]
		]);
	});

	it('refuses a gap that overlaps an earlier one', () => {
		const gaps = new SeqGaps();
		gaps.add(5, 9, at);
		expect(() => gaps.add(9, 12, at)).toThrow(/overlaps 5–9/);
		expect(() => gaps.add(20, 19, at)).toThrow(/from must not exceed to/);
	});

	it('holds exactly the seqs never filled, whatever the order of late frames', () => {
		fc.assert(
			fc.property(
				fc.array(fc.integer({ min: 1, max: 60 }), { maxLength: 80 }),
				fc.array(fc.integer({ min: 1, max: 60 })),
				(arrived, late) => {
					// Seqs 1..60 with some arrived in order: the rest are gaps; then late frames fill them.
					const have = new Set(arrived);
					const gaps = new SeqGaps();
					let start: number | null = null;
					for (let s = 1; s <= 61; s++) {
						const missing = s <= 60 && !have.has(s);
						if (missing && start === null) start = s;
						if (!missing && start !== null) {
							gaps.add(start, s - 1, at);
							start = null;
						}
					}
					for (const s of late) {
						const filled = gaps.fill(s) !== null;
						expect(filled).toBe(!have.has(s));
						have.add(s);
					}
					for (let s = 1; s <= 60; s++) expect(gaps.contains(s)).toBe(!have.has(s));
				}
			)
		);
	});
});
