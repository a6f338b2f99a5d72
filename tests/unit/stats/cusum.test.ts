// CUSUM charts: run lengths against published tables, Siegmund's approximation and seeded
// Monte Carlo estimates computed here.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { uniformStream, poissonKnuth } from '../../support/random';
import {
	TwoSidedPoissonCusum,
	normalCusumArl,
	normalCusumDecisionInterval,
	normalCusumStep,
	poissonCusumArl,
	poissonCusumDecisionInterval,
	poissonCusumStep,
	poissonCusumTwoSidedStep
} from '$lib/stats';

// ── Seeded generators for the Monte Carlo checks ──

/** Standard normal deviate by Box–Muller. */
function normalSampler(random: () => number): () => number {
	return () => {
		let u = 0;
		while (u === 0) u = random();
		return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
	};
}

/** Mean and standard error of run lengths produced by `runOnce`. */
function monteCarlo(runs: number, runOnce: () => number): { mean: number; se: number } {
	let s1 = 0;
	let s2 = 0;
	for (let r = 0; r < runs; r++) {
		const n = runOnce();
		s1 += n;
		s2 += n * n;
	}
	const mean = s1 / runs;
	return { mean, se: Math.sqrt((s2 / runs - mean * mean) / (runs - 1)) };
}

/** Run length of the one-sided Poisson CUSUM, simulated with the plain recursion. */
function simulatePoissonCusum(sample: (mu: number) => number, h: number, rho: number, mu: number, trueRatio: number): number {
	// Increment k·ln ρ − μ(ρ − 1) (Lucas 1985), clamped at 0; signal at S ≥ h.
	let s = 0;
	let n = 0;
	do {
		n++;
		s = Math.max(0, s + sample(trueRatio * mu) * Math.log(rho) - mu * (rho - 1));
	} while (s < h);
	return n;
}

describe('Poisson CUSUM step', () => {
	it('adds the log-likelihood-ratio increment and clamps at 0', () => {
		// Lucas (1985): increment k·ln ρ − μ(ρ − 1).
		expect(poissonCusumStep(0, 3, 1, 2)).toBeCloseTo(3 * Math.log(2) - 1, 12);
		expect(poissonCusumStep(0.5, 0, 1, 2)).toBe(0);
		expect(poissonCusumStep(0, 0, 2, 0.5)).toBeCloseTo(1, 12);
		expect(poissonCusumStep(1, 4, 2, 0.5)).toBeCloseTo(Math.max(0, 1 + 4 * Math.log(0.5) + 1), 12);
	});

	it('two-sided step and wrapper signal on a burst and on a drought', () => {
		const design = { rhoUp: 2, rhoDown: 0.5, hUp: 3, hDown: 3 };
		const burst = poissonCusumTwoSidedStep({ upper: 2.5, lower: 0 }, 4, 1, design);
		expect(burst.upper).toBeCloseTo(2.5 + 4 * Math.log(2) - 1, 12);
		expect(burst.alarmUp).toBe(true);
		expect(burst.alarmDown).toBe(false);

		const chart = new TwoSidedPoissonCusum(design);
		// No counts where 2 are expected: the lower statistic gains μ(1 − ρ) = 1 per window.
		const results = [0, 0, 0].map(() => chart.update(0, 2));
		expect(results.map((r) => r.lower)).toEqual([1, 2, 3]);
		expect(results[2].alarmDown).toBe(true);
		expect(chart.state.lower).toBe(0);
	});

	it('refuses bad input', () => {
		expect(() => poissonCusumStep(0, -1, 1, 2)).toThrow(/count/);
		expect(() => poissonCusumStep(0, 1, 1, 1)).toThrow(/rho/);
		expect(() => poissonCusumStep(-1, 1, 1, 2)).toThrow(/state/);
		expect(() => poissonCusumStep(0, 1, -1, 2)).toThrow(/expected/);
		expect(() => new TwoSidedPoissonCusum({ rhoUp: 0.8, rhoDown: 0.5, hUp: 3, hDown: 3 })).toThrow(/rhoUp/);
		expect(() => poissonCusumArl(0, 2, 1)).toThrow(/h/);
		expect(() => poissonCusumArl(3, 2, 0)).toThrow(/muPerStep/);
	});
});

describe('Poisson CUSUM run length (Brook & Evans Markov chain)', () => {
	const random = uniformStream(20250611);
	const sample = (mu: number) => poissonKnuth(mu, random);

	// Each case: the chain's ARL against a seeded simulation of the recursion in this file,
	// tolerance three Monte Carlo standard errors (the chain has no lattice error to allow for).
	const cases: Array<{ h: number; rho: number; mu: number; ratio: number; runs: number }> = [
		{ h: 3.7, rho: 2, mu: 0.5, ratio: 1, runs: 10000 }, // in control, upward chart
		{ h: 3.7, rho: 2, mu: 0.5, ratio: 2, runs: 4000 }, // rate doubled
		{ h: 3.3, rho: 0.5, mu: 2, ratio: 1, runs: 10000 }, // in control, downward chart
		{ h: 3.3, rho: 0.5, mu: 2, ratio: 0.5, runs: 4000 } // rate halved
	];
	for (const c of cases) {
		it(`matches simulation: h=${c.h}, ρ=${c.rho}, μ=${c.mu}, true ratio ${c.ratio}`, () => {
			const computed = poissonCusumArl(c.h, c.rho, c.mu, c.ratio);
			const mc = monteCarlo(c.runs, () => simulatePoissonCusum(sample, c.h, c.rho, c.mu, c.ratio));
			expect(Math.abs(computed - mc.mean)).toBeLessThan(3 * mc.se);
		});
	}

	it('headstart shortens the run after a change (simulation with the same start)', () => {
		const h = 3.7;
		const computed = poissonCusumArl(h, 2, 0.5, 2, { headstart: h / 2 });
		const mc = monteCarlo(4000, () => {
			let s = h / 2;
			let n = 0;
			do {
				n++;
				s = Math.max(0, s + sample(1) * Math.log(2) - 0.5);
			} while (s < h);
			return n;
		});
		expect(Math.abs(computed - mc.mean)).toBeLessThan(3 * mc.se);
		expect(computed).toBeLessThan(poissonCusumArl(h, 2, 0.5, 2));
	});

	it('is exact when counts step by whole drift units', () => {
		// ρ = e (ln ρ = 1) and μ(ρ − 1) = 1: the statistic only takes integer values, so the
		// in-control ARL can be checked against a hand-built chain on states 0, 1, 2 with h = 3
		// (states: S ← max(0, S + k − 1)); solved here by Gaussian elimination.
		const mu = 1 / (Math.E - 1);
		const p = [0, 1, 2, 3].map((k) => (Math.exp(-mu) * mu ** k) / [1, 1, 2, 6][k]);
		// From S a count k moves to max(0, S + k − 1); reaching 3 or more signals.
		const R = [
			[p[0] + p[1], p[2], p[3]],
			[p[0], p[1], p[2]],
			[0, p[0], p[1]]
		];
		const A = R.map((row, i) => row.map((v, j) => (i === j ? 1 : 0) - v));
		const b = [1, 1, 1];
		for (let c = 0; c < 3; c++) {
			for (let r = c + 1; r < 3; r++) {
				const f = A[r][c] / A[c][c];
				for (let j = c; j < 3; j++) A[r][j] -= f * A[c][j];
				b[r] -= f * b[c];
			}
		}
		const x = [0, 0, 0];
		for (let r = 2; r >= 0; r--) {
			let s = b[r];
			for (let j = r + 1; j < 3; j++) s -= A[r][j] * x[j];
			x[r] = s / A[r][r];
		}
		expect(poissonCusumArl(3, Math.E, mu)).toBeCloseTo(x[0], 8);
	});

	it('property: run length falls as the true rate ratio grows', () => {
		// Common practice: a larger upward shift is detected sooner.
		fc.assert(
			fc.property(fc.double({ min: 0.5, max: 3, noNaN: true }), fc.double({ min: 0.05, max: 1, noNaN: true }), (r1, dr) => {
				const slow = poissonCusumArl(3.7, 2, 0.5, r1);
				const fast = poissonCusumArl(3.7, 2, 0.5, r1 + dr);
				expect(fast).toBeLessThan(slow);
			}),
			{ seed: 5, numRuns: 25 }
		);
	});

	it('decision interval reaches the target in-control run length', () => {
		// Definition: the smallest h whose in-control ARL is at least the target.
		const h = poissonCusumDecisionInterval(400, 2, 0.5);
		expect(poissonCusumArl(h, 2, 0.5)).toBeGreaterThanOrEqual(400);
		expect(poissonCusumArl(0.98 * h, 2, 0.5)).toBeLessThan(400);
		expect(() => poissonCusumDecisionInterval(1, 2, 0.5)).toThrow(/targetArl/);
	});
});

describe('normal (tabular) CUSUM', () => {
	it('step follows the tabular recursion', () => {
		// Montgomery's tabular CUSUM: C⁺ = max(0, C⁺ + z − k), C⁻ = max(0, C⁻ − z − k) (from memory).
		expect(normalCusumStep({ upper: 1, lower: 0.2 }, 1.5, 0.5)).toEqual({ upper: 2, lower: 0 });
		expect(normalCusumStep({ upper: 0.3, lower: 1 }, -2, 0.5)).toEqual({ upper: 0, lower: 2.5 });
		expect(() => normalCusumStep({ upper: 0, lower: 0 }, Number.NaN, 0.5)).toThrow(/z/);
	});

	it('two-sided ARLs match Lucas & Crosier (1982) Table 1, k = 0.5, h = 4', () => {
		// Lucas & Crosier (1982), Technometrics 24, Table 1 (zero start), as in REFERENCES.md.
		const table: Array<[number, number]> = [
			[0, 168],
			[0.5, 26.6],
			[1, 8.38],
			[2, 3.34],
			[3, 2.19]
		];
		for (const [shift, arl] of table) {
			const got = normalCusumArl({ k: 0.5, h: 4, shift, twoSided: true });
			expect(Math.abs(got - arl) / arl).toBeLessThan(0.01);
		}
	});

	it("agrees with Siegmund's approximation at moderate shifts", () => {
		// Siegmund (1985): one-sided ARL ≈ (e^{−2Δb} + 2Δb − 1)/(2Δ²), b = h + 1.166, Δ = δ − k
		// (b² at Δ = 0); an approximation, good for |δ| ≲ 1.5, so a 3 % tolerance.
		const siegmund = (delta: number, k: number, h: number) => {
			const d = delta - k;
			const b = h + 1.166;
			return d === 0 ? b * b : (Math.exp(-2 * d * b) + 2 * d * b - 1) / (2 * d * d);
		};
		for (const [k, h] of [
			[0.5, 4],
			[0.5, 5],
			[0.25, 8]
		]) {
			for (const shift of [0, 0.25, 0.5, 1, 1.5]) {
				const up = normalCusumArl({ k, h, shift, twoSided: false });
				expect(Math.abs(up / siegmund(shift, k, h) - 1)).toBeLessThan(0.03);
				const two = normalCusumArl({ k, h, shift, twoSided: true });
				const twoApprox = 1 / (1 / siegmund(shift, k, h) + 1 / siegmund(-shift, k, h));
				expect(Math.abs(two / twoApprox - 1)).toBeLessThan(0.03);
			}
		}
	});

	it('one-sided ARL with a headstart matches a seeded simulation', () => {
		const random = uniformStream(77);
		const z = normalSampler(random);
		for (const [shift, headstart] of [
			[1, 2],
			[0.5, 2]
		]) {
			const computed = normalCusumArl({ k: 0.5, h: 4, shift, twoSided: false, headstart });
			const mc = monteCarlo(4000, () => {
				let s = headstart;
				let n = 0;
				do {
					n++;
					s = Math.max(0, s + z() + shift - 0.5);
				} while (s < 4);
				return n;
			});
			expect(Math.abs(computed - mc.mean)).toBeLessThan(3 * mc.se);
		}
		expect(() => normalCusumArl({ k: 0.5, h: 4, headstart: 2 })).toThrow(/one-sided/);
	});

	it('property: ARL decreases as the shift grows', () => {
		// Common practice: larger mean shifts are detected sooner (two-sided chart, shift ≥ 0).
		fc.assert(
			fc.property(fc.double({ min: 0, max: 2.5, noNaN: true }), fc.double({ min: 0.05, max: 1, noNaN: true }), (s, ds) => {
				const a = normalCusumArl({ k: 0.5, h: 4, shift: s, twoSided: true });
				const b = normalCusumArl({ k: 0.5, h: 4, shift: s + ds, twoSided: true });
				expect(b).toBeLessThan(a);
			}),
			{ seed: 3, numRuns: 40 }
		);
	});

	it('decision interval for ARL 168 is h ≈ 4 (Lucas & Crosier) and inverts normalCusumArl', () => {
		// Lucas & Crosier (1982) Table 1: k = 0.5, h = 4 gives a two-sided in-control ARL of 168.
		expect(normalCusumDecisionInterval(168, 0.5)).toBeCloseTo(4, 1);
		const target = normalCusumArl({ k: 0.5, h: 4.5, twoSided: false });
		expect(normalCusumDecisionInterval(target, 0.5, { twoSided: false })).toBeCloseTo(4.5, 5);
		expect(() => normalCusumDecisionInterval(0.5, 0.5)).toThrow(/targetArl/);
	});
});
