// EWMA chart: limits, run lengths against Lucas & Saccucci and a seeded simulation.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ewmaArl, ewmaLimitForArl, ewmaLimits, ewmaStep } from '$lib/stats';
import { uniformStream } from '../../support/random';

describe('EWMA step and limits', () => {
	it('step is the exponentially weighted average', () => {
		// Z_t = λ x_t + (1 − λ) Z_{t−1} (Lucas & Saccucci 1990).
		expect(ewmaStep(0, 1, 0.1)).toBeCloseTo(0.1, 14);
		expect(ewmaStep(0.5, -1, 0.25)).toBeCloseTo(0.75 * 0.5 - 0.25, 14);
		expect(() => ewmaStep(0, 1, 0)).toThrow(/lambda/);
		expect(() => ewmaStep(0, Number.NaN, 0.2)).toThrow(/x/);
	});

	it('limits follow the asymptotic and exact variance of the average', () => {
		// Lucas & Saccucci (1990): asymptotic limits ±Lσ√(λ/(2−λ)).
		const asym = ewmaLimits(0.1, 2.814);
		expect(asym.upper).toBeCloseTo(2.814 * Math.sqrt(0.1 / 1.9), 12);
		expect(asym.lower).toBeCloseTo(-asym.upper, 12);
		// After one observation Z₁ = λx₁, so σ_Z = λ exactly (common practice).
		expect(ewmaLimits(0.1, 3, { asymptotic: false, step: 1 }).upper).toBeCloseTo(0.3, 12);
		// Var Z_t = λ²Σ(1−λ)^{2i} summed here directly for t = 7.
		let v = 0;
		for (let i = 0; i < 7; i++) v += 0.04 * Math.pow(0.8, 2 * i);
		expect(ewmaLimits(0.2, 3, { asymptotic: false, step: 7 }).upper).toBeCloseTo(3 * Math.sqrt(v), 12);
		expect(() => ewmaLimits(0.2, 3, { asymptotic: false })).toThrow(/step/);
		expect(() => ewmaLimits(0.2, -3)).toThrow(/L/);
	});
});

describe('EWMA run length (Markov chain)', () => {
	it('matches Lucas & Saccucci (1990) for λ = 0.1, L = 2.814', () => {
		// Lucas & Saccucci (1990), as in REFERENCES.md: in-control ARL ≈ 500, ≈ 10.3 at 1σ.
		expect(Math.abs(ewmaArl({ lambda: 0.1, L: 2.814 }) / 500 - 1)).toBeLessThan(0.01);
		expect(Math.abs(ewmaArl({ lambda: 0.1, L: 2.814, shift: 1 }) / 10.3 - 1)).toBeLessThan(0.01);
		// REFERENCES.md: λ = 0.1, L = 2.7 is an ARL ≈ 370 design.
		expect(Math.abs(ewmaArl({ lambda: 0.1, L: 2.7 }) / 370 - 1)).toBeLessThan(0.01);
	});

	it('converges as the number of states grows', () => {
		// The midpoint discretisation error falls roughly as 1/N² (Brook & Evans 1972).
		const coarse = ewmaArl({ lambda: 0.1, L: 2.814, states: 101 });
		const mid = ewmaArl({ lambda: 0.1, L: 2.814, states: 201 });
		const fine = ewmaArl({ lambda: 0.1, L: 2.814, states: 401 });
		expect(Math.abs(fine - mid)).toBeLessThan(Math.abs(mid - coarse));
		expect(Math.abs(fine - mid) / fine).toBeLessThan(2e-3);
	});

	it('matches a seeded simulation at a 1σ and a 0.5σ shift', () => {
		const random = uniformStream(99);
		const normal = () => {
			let u = 0;
			while (u === 0) u = random();
			return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
		};
		const lambda = 0.1;
		const limit = ewmaLimits(lambda, 2.814).upper;
		for (const [shift, runs] of [
			[1, 4000],
			[0.5, 2000]
		]) {
			let s1 = 0;
			let s2 = 0;
			for (let r = 0; r < runs; r++) {
				let z = 0;
				let n = 0;
				do {
					n++;
					z = (1 - lambda) * z + lambda * (normal() + shift);
				} while (Math.abs(z) < limit);
				s1 += n;
				s2 += n * n;
			}
			const mean = s1 / runs;
			const se = Math.sqrt((s2 / runs - mean * mean) / (runs - 1));
			expect(Math.abs(ewmaArl({ lambda, L: 2.814, shift }) - mean)).toBeLessThan(3 * se);
		}
	});

	it('property: ARL decreases as the shift grows', () => {
		// Common practice: larger mean shifts are detected sooner.
		fc.assert(
			fc.property(fc.double({ min: 0, max: 2, noNaN: true }), fc.double({ min: 0.05, max: 1, noNaN: true }), (s, ds) => {
				const a = ewmaArl({ lambda: 0.2, L: 2.8, shift: s, states: 101 });
				const b = ewmaArl({ lambda: 0.2, L: 2.8, shift: s + ds, states: 101 });
				expect(b).toBeLessThan(a);
			}),
			{ seed: 13, numRuns: 25 }
		);
	});

	it('limit for ARL 500 at λ = 0.1 is L ≈ 2.814', () => {
		// Lucas & Saccucci (1990): λ = 0.1, L = 2.814 is their ARL-500 design.
		expect(Math.abs(ewmaLimitForArl(500, 0.1, { states: 201 }) / 2.814 - 1)).toBeLessThan(2e-3);
		expect(() => ewmaLimitForArl(1, 0.1)).toThrow(/targetArl/);
		expect(() => ewmaArl({ lambda: 0.1, L: 2.8, states: 100 })).toThrow(/odd/);
	});
});
