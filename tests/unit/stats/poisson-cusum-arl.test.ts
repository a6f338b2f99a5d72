// The Poisson CUSUM's run length (stats/cusum.ts, which follows the Markov chain of Brook & Evans
// 1972 on the statistic's exact states) against two references that share none of its code:
// the chain on a lattice of step 1/m counts solved by elimination (Lucas 1985's integer scaling
// of k and h; tests/support/poisson-cusum-lattice.ts), and a seeded Monte Carlo of the recursion
// (tests/support/poisson-cusum-mc.ts). The longer table is tests/bench/cusum-arl.bench.ts.
import { describe, expect, it } from 'vitest';
import { poissonCusumArl, poissonCusumDecisionInterval } from '$lib/stats';
import { bracketingLattices, poissonCusumArlOnLattice } from '../../support/poisson-cusum-lattice';
import { poissonInversionSampler, simulatePoissonCusumArl } from '../../support/poisson-cusum-mc';
import { uniformStream } from '../../support/random';

const referenceValue = (mu: number, rho: number) => (mu * (rho - 1)) / Math.log(rho);
/** μ whose reference value k = μ(ρ − 1)/ln ρ is exactly p/q. */
const muForK = (p: number, q: number, rho: number) => ((p / q) * Math.log(rho)) / (rho - 1);
/** The lattices with k just below and just above the true k, at most `states` states below h. */
function latticeBracket(h: number, rho: number, mu: number, trueRatio: number, states: number) {
	const maxSteps = Math.floor(states / (h / Math.abs(Math.log(rho))));
	const { below, above } = bracketingLattices(referenceValue(mu, rho), 1, maxSteps);
	const low = poissonCusumArlOnLattice(h, rho, mu, trueRatio, below.m, below.kSteps).arl;
	const high = poissonCusumArlOnLattice(h, rho, mu, trueRatio, above.m, above.kSteps).arl;
	return { min: Math.min(low, high), max: Math.max(low, high), low, high };
}
const relative = (x: number, reference: number) => Math.abs(x / reference - 1);

describe('Poisson CUSUM run length: exact chain against the lattice chain', () => {
	// With k = p/q every state is a multiple of 1/q counts, so the lattice chain with q (or a
	// multiple of q) steps per count is exact: the two must agree to rounding (1e-7: the lattice
	// takes the chance of signalling as one minus the others, which costs it some digits).
	const cases: Array<[number, number, number, number, number, number]> = [
		// [p, q, rho, h, trueRatio, steps per count]
		[1, 14, 2, 3.1, 1, 28], // μ ≈ 0.0495 per step
		[1, 14, 2, 3.1, 2, 14],
		[10, 7, 2, 4.4, 1, 70], // μ ≈ 0.99
		[29, 1, 2, 4.2, 1, 3], // μ ≈ 20.1
		[29, 1, 2, 4.2, 1.5, 5],
		[1, 28, 0.5, 3.3, 1, 56], // downward, μ ≈ 0.0495
		[5, 7, 0.5, 3.9, 1, 14], // μ ≈ 0.99
		[5, 7, 0.5, 3.9, 0.5, 7],
		[72, 5, 0.5, 4.6, 1, 5] // μ ≈ 19.96
	];
	for (const [p, q, rho, h, ratio, m] of cases) {
		it(`k = ${p}/${q}, ρ = ${rho}, h = ${h}, true ratio ${ratio}: equal to the lattice with ${m} steps per count`, () => {
			const mu = muForK(p, q, rho);
			const lattice = poissonCusumArlOnLattice(h, rho, mu, ratio, m);
			expect(lattice.kUsed).toBeCloseTo(p / q, 12);
			expect(relative(poissonCusumArl(h, rho, mu, ratio), lattice.arl)).toBeLessThan(1e-7);
		});
	}

	it('at an irrational k the run length lies between the lattices whose k is just below and just above (monotone in k)', () => {
		// With the same counts a larger k lowers the upward statistic and raises the downward one,
		// so ARL is monotone in k and the two lattices bracket it — at the designed h, too, where
		// the run length sits on a jump of its step function.
		for (const rho of [2, 0.5]) {
			for (const mu of [0.05, 0.2, 1, 5, 20]) {
				const h = poissonCusumDecisionInterval(300, rho, mu);
				const arl = poissonCusumArl(h, rho, mu);
				const { min, max } = latticeBracket(h, rho, mu, 1, 500);
				expect(arl).toBeGreaterThanOrEqual(min * (1 - 1e-7));
				expect(arl).toBeLessThanOrEqual(max * (1 + 1e-7));
			}
		}
	});

	it('within 0.5 % of the finer lattices at an irrational k, from 0.05 to 20 counts per step', () => {
		// Off the jumps of the step function (h = 3.93), lattices whose k is within 3e-5 of the true
		// one agree with the exact chain to well under 0.5 %.
		for (const [rho, mu] of [
			[2, 0.05],
			[2, 1],
			[2, 20],
			[0.5, 1],
			[0.5, 20]
		]) {
			const arl = poissonCusumArl(3.93, rho, mu);
			const { low, high } = latticeBracket(3.93, rho, mu, 1, 700);
			expect(relative(low, arl)).toBeLessThan(0.005);
			expect(relative(high, arl)).toBeLessThan(0.005);
		}
	});
});

describe('Poisson CUSUM run length: designed h against a seeded Monte Carlo', () => {
	// The h designed for an in-control run length of 200 steps, then 60 000 simulated runs of the
	// recursion: the chain must lie within 3 standard errors (about 1.3 %). The 300-state lattice
	// chain this replaced was 1–3 % long.
	const cases: Array<[number, number, number]> = [
		[0.05, 2, 11],
		[0.05, 0.5, 12],
		[0.2, 2, 13],
		[20, 2, 14],
		[20, 0.5, 15]
	];
	for (const [mu, rho, seed] of cases) {
		it(`μ = ${mu} per step, ρ = ${rho}`, () => {
			const h = poissonCusumDecisionInterval(200, rho, mu);
			const arl = poissonCusumArl(h, rho, mu);
			expect(arl).toBeGreaterThanOrEqual(200);
			const mc = simulatePoissonCusumArl({ h, rho, mu, runs: 60_000, seed });
			expect(Math.abs(mc.mean - arl)).toBeLessThan(3 * mc.se);
		});
	}

	it('out of control (rate doubled, halved) at 0.05 and 20 per step', () => {
		for (const [mu, rho, ratio, seed] of [
			[0.05, 2, 2, 21],
			[20, 2, 2, 22],
			[0.05, 0.5, 0.5, 23],
			[20, 0.5, 0.5, 24]
		]) {
			const h = poissonCusumDecisionInterval(1000, rho, mu);
			const arl = poissonCusumArl(h, rho, mu, ratio);
			const mc = simulatePoissonCusumArl({ h, rho, mu, trueRatio: ratio, runs: 20_000, seed });
			expect(Math.abs(mc.mean - arl)).toBeLessThan(3 * mc.se);
		}
	});
});

describe('Poisson CUSUM decision interval at low and high counts per step', () => {
	it('is the smallest h reaching the target at 0.05 and at 20 per step', () => {
		// Definition: the in-control ARL is a nondecreasing step function of h; the design is the
		// first h where it reaches the target.
		for (const mu of [0.05, 20]) {
			for (const rho of [2, 0.5]) {
				const h = poissonCusumDecisionInterval(1e5, rho, mu);
				expect(poissonCusumArl(h, rho, mu)).toBeGreaterThanOrEqual(1e5);
				expect(poissonCusumArl(h * (1 - 1e-3), rho, mu)).toBeLessThan(1e5);
			}
		}
	});

	it('a headstart: the exact chain against a seeded simulation from the same start', () => {
		const h = poissonCusumDecisionInterval(300, 2, 0.05);
		const arl = poissonCusumArl(h, 2, 0.05, 2, { headstart: h / 2 });
		expect(arl).toBeLessThan(poissonCusumArl(h, 2, 0.05, 2));
		// the rate doubled (0.1 per step), the statistic starting at h/2 (Lucas & Crosier's fast initial response)
		let s1 = 0;
		let s2 = 0;
		const runs = 20_000;
		const sample = poissonInversionSampler(0.1, uniformStream(31));
		for (let r = 0; r < runs; r++) {
			let S = h / 2;
			let n = 0;
			do {
				n++;
				S = Math.max(0, S + sample() * Math.log(2) - 0.05);
			} while (S < h);
			s1 += n;
			s2 += n * n;
		}
		const mean = s1 / runs;
		const se = Math.sqrt((s2 / runs - mean * mean) / (runs - 1));
		expect(Math.abs(mean - arl)).toBeLessThan(3 * se);
	});
});
