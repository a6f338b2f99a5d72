// Escape from the vacuum for M = 3: the exponent's scaling with (γ²+δ²)/ε², equal occupation of
// the reachable states at δ = 0, reproducibility, progress, cancellation and bad input.
import { beforeAll, describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { estimateEscapeRate, escapeRateRun, runCooperatively, SimulationCancelled, type EscapeResult } from '$lib/physics/langevin';
import type { ModelParams } from '$lib/physics/model';

const cubic = (damping: number, detuning: number, drive: number): ModelParams => ({
	order: 3,
	detuning,
	damping,
	drive,
	nonlinearity: { kind: 'kerr', K: 0 }
});

/** Pearson chi-square p-value for equal expected counts (NIST/SEMATECH e-Handbook 1.3.5.15). */
function uniformityPValue(counts: number[]): number {
	const n = counts.reduce((a, b) => a + b, 0);
	const e = n / counts.length;
	const chi2 = counts.reduce((s, o) => s + (o - e) ** 2 / e, 0);
	return 1 - jStat.chisquare.cdf(chi2, counts.length - 1);
}

describe('escape exponent scales as (γ²+δ²)/ε² (M = 3)', () => {
	// REFERENCES.md (facts of the trade): with noise ∝ γλ(2n̄+1) the escape exponent from the
	// vacuum grows as (γ²+δ²)/ε² over λ(2n̄+1); at δ = 0 this follows from rescaling, at δ ≠ 0 it is
	// a stated result, tested here. Near the vacuum only the cubic drive matters, so K = 0 and the
	// escape is timed to |α| = 2 r_s (r_s the saddle radius), past which the flow carries the
	// trajectory away.
	//
	// Operating points: A = (γ, δ, ε) = (1, 0, 1/3) with (γ²+δ²)/ε² = 9, and B = (1, −1, 0.3849)
	// with (γ²+δ²)/ε² = 13.5: the exponent of B should be 1.5 × that of A. B's noise strengths are
	// 1.5 × A's, so that both see the same predicted barrier-to-noise ratios: finite-barrier
	// corrections to ln W are then alike in both and cancel from the ratio of slopes.
	//
	// Tolerance: each ln W has standard error 1/√(escapes) (Poisson; rate = escapes/exposure). The
	// slope ratio is compared with 1.5 within three of its standard errors, propagated from those;
	// with 400 + 150 escapes per point that is about ±20 %. A slope ratio of 1 (no dependence on
	// the operating point) or 1.5·cos φ ≈ 1.06 (what a cos φ = γ/√(γ²+δ²) factor would give) would
	// both fail. In longer runs (300 escapes at λ = 0.2 and 0.1, δ/γ = 0, ±1 and 3) the slopes per
	// unit of (γ²+δ²)/ε² agreed within 2 %; at larger λ (smaller barriers) the δ = 3γ point drifted
	// 15 % low, which is why the grid here keeps e^{barrier/noise} above about 20.
	const A = cubic(1, 0, 1 / 3);
	const B = cubic(1, -1, Math.sqrt(2 / 13.5));
	const scaleA = 9;
	const scaleB = 13.5;
	const radius = (p: ModelParams) => (2 * Math.hypot(p.damping, p.detuning)) / (3 * p.drive);
	const lambdasA = [0.3, 0.2, 0.15];
	const counts = [400, 200, 150];
	let runsA: EscapeResult[];
	let runsB: EscapeResult[];

	beforeAll(() => {
		const run = (p: ModelParams, lambda: number, trajectories: number, seed: number) =>
			estimateEscapeRate(p, { lambda, noiseFactor: 1, trajectories, maxTime: 1e5, seed, escapeRadius: radius(p) });
		runsA = lambdasA.map((l, i) => run(A, l, counts[i], 100 + i));
		runsB = [0, 2].map((i) => run(B, (lambdasA[i] * scaleB) / scaleA, counts[i], 200 + i));
	});

	const slope = (lo: EscapeResult, hi: EscapeResult) => {
		// ln W(λ) ≈ c − S/λ: S = −Δ ln W / Δ(1/λ), variance from the two Poisson counts.
		const s = -(Math.log(hi.rate_per_unit_time) - Math.log(lo.rate_per_unit_time)) / (1 / hi.lambda - 1 / lo.lambda);
		const se = Math.sqrt(1 / lo.escapes + 1 / hi.escapes) / (1 / hi.lambda - 1 / lo.lambda);
		return { s, se };
	};

	it('escapes every trajectory and never runs away', () => {
		for (const r of [...runsA, ...runsB]) {
			expect(r.censored).toBe(0);
			expect(r.runaways).toBe(0);
		}
	});

	it('gives ln W linear in 1/λ (middle point on the chord within 3σ)', () => {
		const [r0, r1, r2] = runsA;
		const x = (r: EscapeResult) => 1 / r.lambda;
		const y = (r: EscapeResult) => Math.log(r.rate_per_unit_time);
		const onChord = y(r0) + ((y(r2) - y(r0)) * (x(r1) - x(r0))) / (x(r2) - x(r0));
		const w = (x(r1) - x(r0)) / (x(r2) - x(r0));
		const se = Math.sqrt(1 / r1.escapes + (1 - w) ** 2 / r0.escapes + w ** 2 / r2.escapes);
		expect(Math.abs(y(r1) - onChord)).toBeLessThan(3 * se);
	});

	it('has slope ratio (γ²+δ²)/ε² of B over A = 1.5', () => {
		const a = slope(runsA[0], runsA[2]);
		const b = slope(runsB[0], runsB[1]);
		expect(a.s).toBeGreaterThan(0);
		const ratio = b.s / a.s;
		const se = ratio * Math.hypot(a.se / a.s, b.se / b.s);
		expect(Math.abs(ratio - scaleB / scaleA)).toBeLessThan(3 * se);
		expect(3 * se).toBeLessThan(0.35); // the check has the power claimed above
	});
});

describe('equal occupation of the reachable states at δ = 0', () => {
	// Each escape is an independent trial ending in one state, so the destination counts are
	// multinomial and Pearson's chi-square applies exactly (NIST/SEMATECH 1.3.5.15); p from jstat.
	it('Kerr, M = 3: the three states are reached equally often', () => {
		// Z₃ symmetry (α → e^{2πi/3}α) makes the three states equivalent (REFERENCES.md).
		const p: ModelParams = { order: 3, detuning: 0, damping: 1, drive: 1 / 3, nonlinearity: { kind: 'kerr', K: 0.157 } };
		const r = estimateEscapeRate(p, { lambda: 0.3, noiseFactor: 1, trajectories: 240, maxTime: 1e4, seed: 31 });
		expect(r.states).toHaveLength(3);
		expect(r.escapes).toBe(240);
		expect(uniformityPValue(r.destinations)).toBeGreaterThan(0.001);
	});

	// Junction type, M = 3: at δ = 0 (K = 0) the map α → e^{iπ/3}α* is a symmetry of the flow and
	// of the isotropic noise (fixed-points.test.ts explains why), and it exchanges the two families
	// of three states: all six are equally likely. A small detuning breaks it, and the same test
	// must then reject: that is the check that the test can fail.
	const junction = (detuning: number): ModelParams => ({
		order: 3,
		detuning,
		damping: 1,
		drive: 1 / 3,
		nonlinearity: { kind: 'junction', eta: -0.02 }
	});
	const destinations = (detuning: number) =>
		estimateEscapeRate(junction(detuning), { lambda: 0.3, noiseFactor: 1, trajectories: 240, maxTime: 1e4, seed: 47 });

	it('junction type, M = 3: all six states are reached equally often at δ = 0', () => {
		const r = destinations(0);
		expect(r.states).toHaveLength(6);
		expect(r.escapes).toBe(240);
		expect(r.runaways).toBe(0);
		expect(uniformityPValue(r.destinations)).toBeGreaterThan(0.001);
	});

	it('junction type, M = 3: the families are unequal at δ = −0.1 (the chi-square rejects)', () => {
		const r = destinations(-0.1);
		expect(r.states).toHaveLength(6);
		expect(uniformityPValue(r.destinations)).toBeLessThan(1e-6);
	});
});

describe('estimateEscapeRate: plumbing', () => {
	const p = cubic(1, 0, 1 / 3);
	const base = { lambda: 0.3, noiseFactor: 1, trajectories: 30, maxTime: 1e4, escapeRadius: 2 };

	it('same seed → identical result; another seed → another result', () => {
		const a = estimateEscapeRate(p, { ...base, seed: 9 });
		const b = estimateEscapeRate(p, { ...base, seed: 9 });
		const c = estimateEscapeRate(p, { ...base, seed: 10 });
		expect(a).toEqual(b);
		expect(c.exposure).not.toBe(a.exposure);
	});

	it('reports an exact Poisson interval around the rate and counts censored time', () => {
		const r = estimateEscapeRate(p, { ...base, seed: 2, maxTime: 20 });
		expect(r.escapes + r.censored).toBe(30);
		expect(r.censored).toBeGreaterThan(0); // mean first passage ≈ 30 > 20
		expect(r.interval.lower).toBeLessThan(r.rate_per_unit_time);
		expect(r.interval.upper).toBeGreaterThan(r.rate_per_unit_time);
		expect(r.exposure).toBeLessThanOrEqual(30 * 20 + r.dt * 30);
	});

	it('reports monotone progress ending at 1, and stops on an aborted signal', () => {
		const seen: number[] = [];
		estimateEscapeRate(p, { ...base, seed: 3, onProgress: (f) => seen.push(f) });
		expect(seen.at(-1)).toBe(1);
		for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
		const ac = new AbortController();
		ac.abort();
		expect(() => estimateEscapeRate(p, { ...base, seed: 3, signal: ac.signal })).toThrow(SimulationCancelled);
	});

	it('can run cooperatively and be stopped from outside', async () => {
		let stop = false;
		const pending = runCooperatively(escapeRateRun(p, { ...base, trajectories: 100_000, seed: 4 }), { shouldStop: () => stop }, 5);
		setTimeout(() => (stop = true), 30);
		await expect(pending).rejects.toBeInstanceOf(SimulationCancelled);
	});

	it('names bad input', () => {
		// M = 2 above threshold: the vacuum is a saddle, there is nothing to escape from.
		const above: ModelParams = { order: 2, detuning: 0, damping: 1, drive: 1.5, nonlinearity: { kind: 'kerr', K: 0.1 } };
		expect(() => estimateEscapeRate(above, { ...base, seed: 1 })).toThrow(/vacuum is not stable/);
		expect(() => estimateEscapeRate(p, { ...base, escapeRadius: undefined, seed: 1 })).toThrow(/no phase states/);
		expect(() => estimateEscapeRate(p, { ...base, lambda: 0, seed: 1 })).toThrow(/lambda must be a finite number > 0/);
		expect(() => estimateEscapeRate(p, { ...base, noiseFactor: 0.5, seed: 1 })).toThrow(/noiseFactor .* ≥ 1/);
		expect(() => estimateEscapeRate(p, { ...base, trajectories: 2.5, seed: 1 })).toThrow(/trajectories must be a positive integer/);
		expect(() => estimateEscapeRate({ ...p, damping: 0 }, { ...base, seed: 1 })).toThrow(/damping must be > 0/);
	});
});
