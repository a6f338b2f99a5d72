// Exact Poisson statistics checked against published limits and against direct summation.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
	poissonInterval,
	poissonLowerTail,
	poissonThresholdForTail,
	poissonUpperLimitOneSided,
	poissonUpperTail,
	rateRatioTest
} from '$lib/stats';

// ── Independent reference computations (plain summation, no special functions) ──

const logFactorials = [0];
function logFactorial(n: number): number {
	for (let i = logFactorials.length; i <= n; i++) logFactorials.push(logFactorials[i - 1] + Math.log(i));
	return logFactorials[n];
}

/** P(K = j) for j = 0…jMax, built from ln P(K = j) by summing logarithms. */
function poissonPmfs(mu: number, jMax: number): number[] {
	const out: number[] = [];
	for (let j = 0; j <= jMax; j++) out.push(Math.exp(-mu + j * Math.log(mu) - logFactorial(j)));
	return out;
}

/** P(K ≤ n | mu) by direct summation. */
function directLowerTail(n: number, mu: number): number {
	return poissonPmfs(mu, n).reduce((a, b) => a + b, 0);
}

/** P(K ≥ k | mu) by direct summation upward from k until the terms vanish. */
function directUpperTail(k: number, mu: number): number {
	let term = Math.exp(-mu + k * Math.log(mu) - logFactorial(k));
	let sum = 0;
	for (let j = k; j < k + 100000; j++) {
		sum += term;
		term *= mu / (j + 1);
		if (term < sum * 1e-18) break;
	}
	return sum;
}

/** Root of a monotone function by bisection on [lo, hi]. */
function bisect(f: (x: number) => number, lo: number, hi: number): number {
	const flo = f(lo);
	for (let i = 0; i < 100; i++) {
		const mid = (lo + hi) / 2;
		if (Math.sign(f(mid)) === Math.sign(flo)) lo = mid;
		else hi = mid;
	}
	return (lo + hi) / 2;
}

function binomialPmfs(n: number, p: number): number[] {
	const out: number[] = [];
	for (let i = 0; i <= n; i++) {
		const logC = logFactorial(n) - logFactorial(i) - logFactorial(n - i);
		out.push(Math.exp(logC + i * Math.log(p) + (n - i) * Math.log(1 - p)));
	}
	return out;
}

function relErr(a: number, b: number): number {
	return Math.abs(a - b) / Math.abs(b);
}

describe('poissonInterval (Garwood)', () => {
	it('matches the published 95 % limits at n = 0 and n = 10', () => {
		// Garwood (1936), values as listed in REFERENCES.md: n = 0 → (0, 3.6889).
		const zero = poissonInterval(0, 0.95);
		expect(zero.lower).toBe(0);
		expect(zero.upper).toBeCloseTo(3.6889, 4);
		// Garwood (1936), REFERENCES.md: n = 10 → (4.7954, 18.3904).
		const ten = poissonInterval(10, 0.95);
		expect(ten.lower).toBeCloseTo(4.7954, 4);
		expect(ten.upper).toBeCloseTo(18.3904, 4);
	});

	it('matches limits root-found from the Poisson cdf by direct summation', () => {
		// Garwood's definition, independent of the chi-square route: the lower limit L solves
		// P(K ≥ n | L) = α/2 and the upper limit U solves P(K ≤ n | U) = α/2.
		for (const confidence of [0.95, 0.9]) {
			const alpha = 1 - confidence;
			for (const n of [1, 5, 10, 50, 100]) {
				const top = n + 20 * Math.sqrt(n) + 20;
				const L = bisect((mu) => 1 - directLowerTail(n - 1, mu) - alpha / 2, 1e-9, top);
				const U = bisect((mu) => directLowerTail(n, mu) - alpha / 2, 1e-9, top);
				const got = poissonInterval(n, confidence);
				expect(relErr(got.lower, L)).toBeLessThan(1e-6);
				expect(relErr(got.upper, U)).toBeLessThan(1e-6);
			}
			// At n = 0 the upper limit solves e^{−U} = α/2 in closed form.
			expect(relErr(poissonInterval(0, confidence).upper, -Math.log(alpha / 2))).toBeLessThan(1e-7);
		}
	});

	it('one-sided upper limit at zero counts is −ln 0.05 = 2.9957', () => {
		// REFERENCES.md (Garwood 1936): one-sided 95 % upper limit for n = 0 is −ln 0.05.
		expect(poissonUpperLimitOneSided(0, 0.95)).toBeCloseTo(2.9957, 4);
		expect(relErr(poissonUpperLimitOneSided(0, 0.95), -Math.log(0.05))).toBeLessThan(1e-7);
		// Same definition at n = 5: U solves P(K ≤ 5 | U) = 0.05 (direct summation).
		const U = bisect((mu) => directLowerTail(5, mu) - 0.05, 1e-9, 60);
		expect(relErr(poissonUpperLimitOneSided(5, 0.95), U)).toBeLessThan(1e-6);
	});

	it('property: the interval contains the count', () => {
		// Common practice: an exact interval for n ≥ 1 brackets the point estimate n.
		fc.assert(
			fc.property(fc.integer({ min: 1, max: 20000 }), fc.double({ min: 0.5, max: 0.999, noNaN: true }), (count, confidence) => {
				const { lower, upper } = poissonInterval(count, confidence);
				expect(lower).toBeGreaterThan(0);
				expect(lower).toBeLessThanOrEqual(count);
				expect(upper).toBeGreaterThanOrEqual(count);
			}),
			{ seed: 31, numRuns: 150 }
		);
	});

	it('refuses bad input with a RangeError naming the argument', () => {
		expect(() => poissonInterval(-1)).toThrow(/count/);
		expect(() => poissonInterval(2.5)).toThrow(RangeError);
		expect(() => poissonInterval(3, 1)).toThrow(/confidence/);
		expect(() => poissonUpperLimitOneSided(3, 0)).toThrow(/confidence/);
	});
});

describe('Poisson tails', () => {
	// Direct summation of the Poisson pmf (written in this file) as the reference.
	const cases: Array<[number, number]> = [
		[1, 0.1],
		[3, 3],
		[5, 0.1],
		[10, 0.5], // tail ≈ 1.7e-10
		[12, 0.5], // tail ≈ 3.2e-13: below 1e-12
		[20, 1], // tail ≈ 1.6e-19
		[40, 5], // tail ≈ 8.6e-23
		[50, 10],
		[150, 100],
		[200, 100],
		[1000, 900],
		[5, 20],
		[2, 30]
	];

	it('poissonUpperTail matches direct summation, including tiny tails', () => {
		for (const [k, mu] of cases) {
			expect(relErr(poissonUpperTail(k, mu), directUpperTail(k, mu))).toBeLessThan(1e-8);
		}
		expect(poissonUpperTail(12, 0.5)).toBeLessThan(1e-12);
		expect(poissonUpperTail(0, 4)).toBe(1);
		expect(poissonUpperTail(3, 0)).toBe(0);
	});

	it('poissonLowerTail matches direct summation, including tiny tails', () => {
		const lowCases: Array<[number, number]> = [
			[0, 5],
			[2, 30], // ≈ 4.5e-11
			[10, 60], // ≈ 1.7e-15
			[5, 5],
			[100, 100],
			[80, 100],
			[900, 1000]
		];
		for (const [k, mu] of lowCases) {
			expect(relErr(poissonLowerTail(k, mu), directLowerTail(k, mu))).toBeLessThan(1e-8);
		}
		expect(poissonLowerTail(-1, 3)).toBe(0);
	});

	it('property: poissonUpperTail decreases in k', () => {
		// P(K ≥ k) is a survival function, hence non-increasing in k (common practice).
		fc.assert(
			fc.property(fc.double({ min: 1e-3, max: 300, noNaN: true }), fc.integer({ min: 0, max: 600 }), (mu, k) => {
				expect(poissonUpperTail(k + 1, mu)).toBeLessThanOrEqual(poissonUpperTail(k, mu));
			}),
			{ seed: 7, numRuns: 300 }
		);
	});

	it('poissonThresholdForTail returns the smallest count with tail ≤ alpha', () => {
		// The definition, checked with the directly summed tail.
		for (const [mu, alpha] of [
			[0.5, 1e-3],
			[3, 0.05],
			[20, 1e-6],
			[200, 1e-9],
			[0.01, 1e-12]
		]) {
			const k = poissonThresholdForTail(mu, alpha);
			expect(directUpperTail(k, mu)).toBeLessThanOrEqual(alpha);
			expect(k === 0 || directUpperTail(k - 1, mu) > alpha).toBe(true);
		}
		expect(poissonThresholdForTail(2, 1)).toBe(0);
		expect(poissonThresholdForTail(0, 0.01)).toBe(1);
		expect(() => poissonThresholdForTail(2, 0)).toThrow(/alpha/);
		expect(() => poissonThresholdForTail(-1, 0.1)).toThrow(/mu/);
	});
});

describe('rateRatioTest', () => {
	it('reproduces a worked two-rate comparison', () => {
		// R's stats::poisson.test help-page example (from memory): counts 11 over 800 and
		// 6+8+7 = 21 over 1083+1050+878 = 3011 person-years; rate ratio 1.971488, exact 95 %
		// interval 0.8584264 to 4.2772659 (Clopper–Pearson, the same construction as here),
		// p-value 0.07967 under R's binom.test convention (sum of outcomes no more likely than the
		// observed one), which is not the doubled-tail convention used here.
		const r = rateRatioTest(11, 800, 21, 3011);
		expect(r.ratio).toBeCloseTo(1.971488, 5);
		expect(r.lower).toBeCloseTo(0.8584264, 5);
		expect(r.upper).toBeCloseTo(4.2772659, 5);

		// Confirms the remembered example by recomputing R's p-value from its own definition.
		const n = 32;
		const pmf = binomialPmfs(n, 800 / 3811);
		const observed = pmf[11];
		const minLike = pmf.filter((p) => p <= observed * (1 + 1e-7)).reduce((a, b) => a + b, 0);
		expect(minLike).toBeCloseTo(0.07967, 4);

		// Our doubled smaller tail, from direct binomial summation.
		const below = pmf.slice(0, 12).reduce((a, b) => a + b, 0);
		const above = pmf.slice(11).reduce((a, b) => a + b, 0);
		expect(relErr(r.pValue, Math.min(1, 2 * Math.min(below, above)))).toBeLessThan(1e-8);
	});

	it('p-value and interval agree with direct binomial computation', () => {
		// Conditional binomial test (Przyborowski & Wilenski 1940): x1 | n ~ Bin(n, t1/(t1+t2)).
		// Clopper–Pearson limits root-found here on directly summed binomial tails.
		const cases: Array<[number, number, number, number]> = [
			[30, 10, 10, 10],
			[12, 10, 10, 10],
			[3, 2.5, 17, 4],
			[0, 5, 9, 3],
			[7, 1, 0, 2],
			[150, 1000, 110, 1000]
		];
		for (const [x1, t1, x2, t2] of cases) {
			const n = x1 + x2;
			const pmf = binomialPmfs(n, t1 / (t1 + t2));
			const below = pmf.slice(0, x1 + 1).reduce((a, b) => a + b, 0);
			const above = pmf.slice(x1).reduce((a, b) => a + b, 0);
			const r = rateRatioTest(x1, t1, x2, t2, 0.95);
			expect(relErr(r.pValue, Math.min(1, 2 * Math.min(below, above)))).toBeLessThan(1e-7);

			const tailAbove = (p: number) =>
				binomialPmfs(n, p)
					.slice(x1)
					.reduce((a, b) => a + b, 0);
			const tailBelow = (p: number) =>
				binomialPmfs(n, p)
					.slice(0, x1 + 1)
					.reduce((a, b) => a + b, 0);
			const pL = x1 === 0 ? 0 : bisect((p) => tailAbove(p) - 0.025, 1e-12, 1 - 1e-12);
			const pU = x1 === n ? 1 : bisect((p) => tailBelow(p) - 0.025, 1e-12, 1 - 1e-12);
			const toRatio = (p: number) => (p / (1 - p)) * (t2 / t1);
			if (x1 === 0) expect(r.lower).toBe(0);
			else expect(relErr(r.lower, toRatio(pL))).toBeLessThan(1e-5);
			if (x1 === n) expect(r.upper).toBe(Infinity);
			else expect(relErr(r.upper, toRatio(pU))).toBeLessThan(1e-5);
		}
	});

	it('interval excludes 1 exactly when the p-value is below 1 − confidence', () => {
		// Clear-cut cases: a threefold excess, and two nearly equal rates.
		const strong = rateRatioTest(30, 10, 10, 10);
		expect(strong.pValue).toBeLessThan(0.01);
		expect(strong.lower).toBeGreaterThan(1);
		const equalish = rateRatioTest(12, 10, 10, 10);
		expect(equalish.pValue).toBeGreaterThan(0.5);
		expect(equalish.lower).toBeLessThan(1);
		expect(equalish.upper).toBeGreaterThan(1);

		// Both invert the same two binomial tails, so they agree wherever the p-value is not
		// within numerical precision of α.
		fc.assert(
			fc.property(
				fc.integer({ min: 0, max: 60 }),
				fc.integer({ min: 0, max: 60 }),
				fc.double({ min: 0.1, max: 10, noNaN: true }),
				fc.double({ min: 0.1, max: 10, noNaN: true }),
				(x1, x2, t1, t2) => {
					fc.pre(x1 + x2 > 0);
					const r = rateRatioTest(x1, t1, x2, t2, 0.9);
					fc.pre(Math.abs(r.pValue - 0.1) > 1e-4);
					const excludesOne = r.lower > 1 || r.upper < 1;
					expect(excludesOne).toBe(r.pValue < 0.1);
				}
			),
			{ seed: 11, numRuns: 300 }
		);
	});

	it('handles zero counts and refuses meaningless input', () => {
		const noSecond = rateRatioTest(7, 1, 0, 2);
		expect(noSecond.ratio).toBe(Infinity);
		expect(noSecond.upper).toBe(Infinity);
		const noFirst = rateRatioTest(0, 5, 9, 3);
		expect(noFirst.ratio).toBe(0);
		expect(noFirst.lower).toBe(0);
		// Clopper–Pearson upper limit at x = 0 is 1 − (α/2)^{1/n} in closed form.
		const pU = 1 - Math.pow(0.025, 1 / 9);
		expect(relErr(noFirst.upper, (pU / (1 - pU)) * (3 / 5))).toBeLessThan(1e-6);
		expect(() => rateRatioTest(0, 1, 0, 1)).toThrow(/x1 \+ x2/);
		expect(() => rateRatioTest(3, 0, 2, 1)).toThrow(/t1/);
		expect(() => rateRatioTest(3, 1, 2, -1)).toThrow(/t2/);
		expect(() => rateRatioTest(-3, 1, 2, 1)).toThrow(/x1/);
		expect(() => rateRatioTest(3, 1, 2.2, 1)).toThrow(/x2/);
	});
});
