// Switching among the phase states (M = 3, Kerr, δ = 0): equal occupation, bookkeeping, seeds.
import { beforeAll, describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { estimateSwitchingRate, type SwitchingResult } from '$lib/physics/langevin';
import type { ModelParams } from '$lib/physics/model';

// Close above the birth of the period-3 states (9ε² ≥ 4Kγ at δ = 0; here 2.25 vs 2) the states
// are shallow, so a short run sees hundreds of switches, most of them through the vacuum.
const params: ModelParams = { order: 3, detuning: 0, damping: 1, drive: 0.5, nonlinearity: { kind: 'kerr', K: 0.5 } };
const options = { lambda: 0.3, noiseFactor: 1, duration: 3000, trajectories: 3, seed: 77 };

describe('estimateSwitchingRate', () => {
	let r: SwitchingResult;
	beforeAll(() => {
		r = estimateSwitchingRate(params, options);
	});

	it('finds the three phase states and the vacuum, and switches often', () => {
		expect(r.states.map((s) => s.isVacuum)).toEqual([false, false, false, true]);
		expect(r.runaways).toBe(0);
		expect(r.phaseSwitches.count).toBeGreaterThan(100);
	});

	it('occupies the three states equally at δ = 0 (chi-square on the visits)', () => {
		// Z₃ symmetry makes the states equivalent (REFERENCES.md). Pearson's chi-square (NIST/
		// SEMATECH 1.3.5.15) on the number of visits to each phase state; successive visits are
		// not independent (a state is never entered twice in a row), which makes the counts more
		// even than multinomial, so the test is conservative. p from jstat.
		const v = r.visits.slice(0, 3);
		const e = v.reduce((a, b) => a + b, 0) / 3;
		const chi2 = v.reduce((s, o) => s + (o - e) ** 2 / e, 0);
		expect(1 - jStat.chisquare.cdf(chi2, 2)).toBeGreaterThan(0.001);
		// Time occupation: each state's total time is a sum of about v[k] dwell times, each roughly
		// exponential, so its relative standard error is about 1/√v[k]; allow four of them.
		const occ = r.occupation.slice(0, 3);
		const mean = occ.reduce((a, b) => a + b, 0) / 3;
		occ.forEach((o, k) => expect(Math.abs(o - mean)).toBeLessThan((4 * mean) / Math.sqrt(v[k])));
	});

	it('keeps consistent books', () => {
		const K = r.states.length;
		const total = r.counts.flat().reduce((a, b) => a + b, 0);
		expect(total).toBe(r.switches);
		expect(r.occupation.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 9);
		for (let k = 0; k < K; k++) {
			expect(r.counts[k][k]).toBe(0);
			const incoming = r.counts.reduce((s, row) => s + row[k], 0);
			// Entries = incoming switches + trajectories started there (state i mod 3 for trajectory i).
			expect(r.visits[k]).toBe(incoming + (k < 3 ? 1 : 0));
			for (let j = 0; j < K; j++) expect(r.pairRates[k][j]).toBeCloseTo(r.counts[k][j] / r.occupancyTime[k], 12);
		}
		expect(r.rate_per_unit_time).toBeCloseTo(r.switches / r.exposure, 12);
		expect(r.interval.lower).toBeLessThan(r.rate_per_unit_time);
		expect(r.interval.upper).toBeGreaterThan(r.rate_per_unit_time);
		expect(r.exposure).toBeCloseTo(3 * 3000, 0);
		// Phase switches skip over vacuum stays, so there are at most as many as switches into phase states.
		const intoPhase = r.counts.reduce((s, row) => s + row[0] + row[1] + row[2], 0);
		expect(r.phaseSwitches.count).toBeLessThanOrEqual(intoPhase);
	});

	it('same seed → identical result', () => {
		const again = estimateSwitchingRate(params, { ...options, duration: 500 });
		expect(estimateSwitchingRate(params, { ...options, duration: 500 })).toEqual(again);
	});

	it('names bad input', () => {
		const vacuumOnly: ModelParams = { order: 2, detuning: 0, damping: 1, drive: 0.5, nonlinearity: { kind: 'kerr', K: 0.1 } };
		expect(() => estimateSwitchingRate(vacuumOnly, options)).toThrow(/at least two attracting states/);
		expect(() => estimateSwitchingRate(params, { ...options, startState: 7 })).toThrow(/startState must be an index/);
		expect(() => estimateSwitchingRate(params, { ...options, duration: -1 })).toThrow(/duration must be a finite number > 0/);
	});
});
