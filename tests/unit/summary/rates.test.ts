// Rates with exact intervals against a prediction. Interval values: Garwood (1936), Biometrika 28,
// 437–442, as listed in /work/shared/REFERENCES.md (95 %: n = 0 → (0, 3.6889); n = 10 → (4.7954, 18.3904)).
// Tail probabilities are checked against a direct sum of the Poisson pmf written here.
import { describe, expect, it } from 'vitest';
import { compareRate } from '../../../src/lib/summary/rates';

function poissonCdfBySum(k: number, mu: number): number {
	let term = Math.exp(-mu);
	let sum = term;
	for (let j = 1; j <= k; j++) {
		term *= mu / j;
		sum += term;
	}
	return sum;
}

describe('compareRate', () => {
	it('divides the Garwood limits by the exposure', () => {
		const r = compareRate(10, 2, null);
		expect(r.rate_per_s).toBe(5);
		expect(r.interval_per_s!.lower).toBeCloseTo(4.7954 / 2, 4);
		expect(r.interval_per_s!.upper).toBeCloseTo(18.3904 / 2, 4);
		expect(r.verdict).toBe('no prediction');
		const zero = compareRate(0, 100, null);
		expect(zero.interval_per_s!.lower).toBe(0);
		expect(zero.interval_per_s!.upper).toBeCloseTo(3.6889 / 100, 6);
	});

	it('gives the two-sided exact p-value of the count under the prediction', () => {
		// 20 seen where 10 were predicted: upper tail P(K ≥ 20 | 10) = 1 − P(K ≤ 19 | 10).
		const upper = 1 - poissonCdfBySum(19, 10);
		const r = compareRate(20, 1000, 10);
		expect(r.pValue).toBeCloseTo(2 * upper, 8);
		expect(r.verdict).toBe('above prediction');
		expect(r.ratio).toBe(2);
		expect(r.expected_rate_per_s).toBeCloseTo(0.01, 12);
		// 2 seen where 12 were predicted: lower tail P(K ≤ 2 | 12).
		const low = compareRate(2, 1000, 12);
		expect(low.pValue).toBeCloseTo(2 * poissonCdfBySum(2, 12), 10);
		expect(low.verdict).toBe('below prediction');
		// Right on the prediction: both tails exceed 1/2, so the p-value caps at 1.
		expect(compareRate(10, 5, 10).pValue).toBe(1);
		expect(compareRate(10, 5, 10).verdict).toBe('as predicted');
	});

	it('says so when there is no exposure and refuses bad input', () => {
		expect(compareRate(0, 0, 3).verdict).toBe('no exposure');
		expect(() => compareRate(1.5, 1, null)).toThrow(/whole number/);
		expect(() => compareRate(1, -1, null)).toThrow(/exposure_s/);
		expect(() => compareRate(1, 1, -2)).toThrow(/expected/);
	});
});
