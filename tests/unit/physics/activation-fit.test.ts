// fitActivation and fitFromSimulation: recovery of known parameters from data drawn from the model
// (seeded), interval coverage, and agreement with independent fits computed in the test.
import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { uniformStream, poissonKnuth } from '../../support/random';
import { fitActivation, fitFromSimulation, MIN_COUNT_FOR_WLS, type CalibrationPoint } from '$lib/physics/activation';

const h = 6.62607015e-34; // SI Brochure 9th ed. (exact)
const kB = 1.380649e-23; // SI Brochure 9th ed. (exact)

/** 1/(2n̄+1) from Bose–Einstein n̄ = 1/(e^{hf/k_BT} − 1), written out here (REFERENCES.md). */
function inverseNoiseFactor(f_GHz: number, T_mK: number): number {
	const n = 1 / (Math.exp((h * f_GHz * 1e9) / (kB * T_mK * 1e-3)) - 1);
	return 1 / (2 * n + 1);
}

const TRUTH = { W0_per_s: 2e5, A: 10, mode_GHz: 5 };
const TEMPS_mK = [10, 30, 50, 70, 90, 120];

function drawTable(seed: number, exposure_s: number): CalibrationPoint[] {
	const random = uniformStream(seed);
	return TEMPS_mK.map((T_mK) => {
		const rate = TRUTH.W0_per_s * Math.exp(-TRUTH.A * inverseNoiseFactor(TRUTH.mode_GHz, T_mK));
		return { T_mK, exposure_s, count: poissonKnuth(rate * exposure_s, random) };
	});
}

const options = { mode_GHz: TRUTH.mode_GHz, process: 'switching' as const };

describe('the test sampler', () => {
	it('draws Poisson counts with the right mean and variance', () => {
		// Poisson: mean = variance = μ (any probability text); checked at a small and a large μ.
		for (const mu of [3.5, 400]) {
			const random = uniformStream(7);
			const draws = Array.from({ length: 4000 }, () => poissonKnuth(mu, random));
			const mean = draws.reduce((a, b) => a + b, 0) / draws.length;
			const variance = draws.reduce((a, b) => a + (b - mean) ** 2, 0) / (draws.length - 1);
			expect(Math.abs(mean - mu)).toBeLessThan(4 * Math.sqrt(mu / draws.length));
			expect(Math.abs(variance / mu - 1)).toBeLessThan(0.1);
		}
	});
});

describe('fitActivation', () => {
	it('recovers W0 and A by weighted least squares from large counts', () => {
		// Truth within 3σ of the estimate: normal approximation to the fit's sampling error.
		const points = drawTable(11, 100);
		expect(Math.min(...points.map((p) => p.count))).toBeGreaterThanOrEqual(MIN_COUNT_FOR_WLS);
		const fit = fitActivation(points, options);
		expect(fit.method).toBe('wls');
		const m = fit.model;
		expect(Math.abs(m.A - TRUTH.A)).toBeLessThan(3 * m.A_sigma!);
		expect(Math.abs(Math.log(m.W0_per_s / TRUTH.W0_per_s))).toBeLessThan(3 * m.W0_sigma!);
		expect(m.A_sigma!).toBeLessThan(0.5); // informative: ~1/(√N·spread of x) ≈ 0.1
		expect(m.fittedRange).toEqual({ T_mK: [10, 120] });
		expect(m.source).toBe('calibration');
		expect(fit.goodnessOfFit).toMatchObject({ statistic: 'chi-square', dof: TEMPS_mK.length - 2 });
	});

	it('recovers W0 and A by Poisson maximum likelihood from small counts', () => {
		// Truth within 3σ (inverse Fisher information; any text on maximum likelihood).
		const points = drawTable(12, 0.5);
		expect(Math.min(...points.map((p) => p.count))).toBeLessThan(MIN_COUNT_FOR_WLS);
		const fit = fitActivation(points, options);
		expect(fit.method).toBe('poisson-ml');
		const m = fit.model;
		expect(Math.abs(m.A - TRUTH.A)).toBeLessThan(3 * m.A_sigma!);
		expect(Math.abs(Math.log(m.W0_per_s / TRUTH.W0_per_s))).toBeLessThan(3 * m.W0_sigma!);
		expect(fit.goodnessOfFit).toMatchObject({ statistic: 'deviance', dof: TEMPS_mK.length - 2 });
	});

	it.each([
		['wls', 100],
		['poisson-ml', 0.5]
	])('gives 1σ intervals that cover the truth about 68 %% of the time (%s)', (method, exposure_s) => {
		// 50 seeded tables. Coverage of ±1σ is 68.27 % for a normal estimate; binomial sd of the
		// hit count is √(50·0.683·0.317) ≈ 3.3, so accept 34 ± 11 (≈ 3.3 sd, common practice).
		// The mean chi-square / deviance should be its dof, 4 (sd of the mean √(8/50) ≈ 0.4).
		const seeds = 50;
		let hitsA = 0;
		let hitsW0 = 0;
		let gofSum = 0;
		for (let seed = 1000; seed < 1000 + seeds; seed++) {
			const fit = fitActivation(drawTable(seed, exposure_s), options);
			expect(fit.method).toBe(method);
			const m = fit.model;
			if (Math.abs(m.A - TRUTH.A) <= m.A_sigma!) hitsA++;
			if (Math.abs(Math.log(m.W0_per_s / TRUTH.W0_per_s)) <= m.W0_sigma!) hitsW0++;
			gofSum += fit.goodnessOfFit.value;
		}
		expect(hitsA).toBeGreaterThanOrEqual(23);
		expect(hitsA).toBeLessThanOrEqual(45);
		expect(hitsW0).toBeGreaterThanOrEqual(23);
		expect(hitsW0).toBeLessThanOrEqual(45);
		expect(Math.abs(gofSum / seeds - 4)).toBeLessThan(1.6);
	});

	it('matches an ordinary regression of ln W on 1/(2n̄+1) when the counts are equal', () => {
		// Equal counts → equal weights, so WLS is ordinary least squares: compared with
		// simple-statistics' linearRegression (reference library). Slope variance 1/(N·Σ(x − x̄)²)
		// from var(ln N) ≈ 1/N (delta method).
		const N = 400;
		const exposures = [900, 300, 120, 60, 20];
		const temps = [12, 40, 65, 90, 115];
		const points = temps.map((T_mK, i) => ({ T_mK, count: N, exposure_s: exposures[i] }));
		const fit = fitActivation(points, options);
		const xs = temps.map((T) => inverseNoiseFactor(5, T));
		const ref = linearRegression(xs.map((x, i) => [x, Math.log(N / exposures[i])]));
		expect(fit.model.A).toBeCloseTo(-ref.m, 9);
		expect(Math.log(fit.model.W0_per_s)).toBeCloseTo(ref.b, 9);
		const xBar = xs.reduce((a, b) => a + b, 0) / xs.length;
		const sxx = xs.reduce((a, x) => a + (x - xBar) ** 2, 0);
		expect(fit.model.A_sigma!).toBeCloseTo(Math.sqrt(1 / (N * sxx)), 9);
		expect(fit.model.W0_sigma!).toBeCloseTo(Math.sqrt(1 / (N * xs.length) + xBar ** 2 / (N * sxx)), 9);
	});

	it('finds the Poisson maximum: zero score, Fisher covariance, deviance', () => {
		// For a log-linear Poisson model (canonical link) the likelihood equations are
		// Σ(k − μ̂) = 0 and Σ x(k − μ̂) = 0, the covariance is (Xᵀ diag μ̂ X)⁻¹ and the deviance
		// 2Σ[k ln(k/μ̂) − (k − μ̂)] (McCullagh & Nelder, Generalized Linear Models, from memory).
		const points = drawTable(99, 0.3);
		const fit = fitActivation(points, options);
		expect(fit.method).toBe('poisson-ml');
		const { W0_per_s, A } = fit.model;
		const xs = points.map((p) => inverseNoiseFactor(5, p.T_mK!));
		const mu = points.map((p, i) => p.exposure_s * W0_per_s * Math.exp(-A * xs[i]));
		const s0 = points.reduce((acc, p, i) => acc + p.count - mu[i], 0);
		const s1 = points.reduce((acc, p, i) => acc + xs[i] * (p.count - mu[i]), 0);
		expect(Math.abs(s0)).toBeLessThan(1e-8);
		expect(Math.abs(s1)).toBeLessThan(1e-8);
		// Information for (ln W0, A): derivative of ln μ is (1, −x).
		const i00 = mu.reduce((a, m) => a + m, 0);
		const i01 = -mu.reduce((a, m, i) => a + m * xs[i], 0);
		const i11 = mu.reduce((a, m, i) => a + m * xs[i] ** 2, 0);
		const det = i00 * i11 - i01 * i01;
		expect(fit.model.W0_sigma! ** 2 / (i11 / det)).toBeCloseTo(1, 8);
		expect(fit.model.A_sigma! ** 2 / (i00 / det)).toBeCloseTo(1, 8);
		expect(fit.model.covariance! / (-i01 / det)).toBeCloseTo(1, 8);
		const deviance = points.reduce(
			(acc, p, i) => acc + 2 * ((p.count > 0 ? p.count * Math.log(p.count / mu[i]) : 0) - (p.count - mu[i])),
			0
		);
		expect(fit.goodnessOfFit.value).toBeCloseTo(deviance, 8);
	});

	it('handles zero counts at some temperatures on the likelihood path', () => {
		// Zero counts are legitimate Poisson outcomes; least squares on ln k cannot use them.
		const points: CalibrationPoint[] = [
			{ T_mK: 10, count: 0, exposure_s: 1 },
			{ T_mK: 60, count: 3, exposure_s: 1 },
			{ T_mK: 120, count: 40, exposure_s: 1 }
		];
		const fit = fitActivation(points, options);
		expect(fit.method).toBe('poisson-ml');
		expect(fit.model.A).toBeGreaterThan(0);
		expect(Number.isFinite(fit.model.A_sigma!)).toBe(true);
	});

	it('recovers A_ref for escape from points at several operating points', () => {
		// x = [s(op)/s(ref)]/(2n̄+1) with s = (γ² + δ²)/ε² (DESIGN.md "Predicted rate"); truth within 3σ.
		const reference = { detuning: 0.2, damping: 0.5, drive: 1 };
		const drives = [0.9, 1, 1.1, 1.25];
		const random = uniformStream(5);
		const points = drives.flatMap((drive) =>
			[15, 80].map((T_mK) => {
				const op = { detuning: 0.2, damping: 0.5, drive };
				const ratio = 1 / drive ** 2;
				const rate = 3e4 * Math.exp(-9 * ratio * inverseNoiseFactor(6, T_mK));
				return { T_mK, operatingPoint: op, exposure_s: 50, count: poissonKnuth(rate * 50, random) };
			})
		);
		const fit = fitActivation(points, { mode_GHz: 6, process: 'escape', reference });
		expect(Math.abs(fit.model.A - 9)).toBeLessThan(3 * fit.model.A_sigma!);
		expect(Math.abs(Math.log(fit.model.W0_per_s / 3e4))).toBeLessThan(3 * fit.model.W0_sigma!);
		expect(fit.model.reference).toEqual(reference);
		expect(fit.model.fittedRange!.scale![0]).toBeCloseTo(1 / 1.25 ** 2, 12);
		expect(fit.model.fittedRange!.scale![1]).toBeCloseTo(1 / 0.9 ** 2, 12);
	});

	it('refuses points that cannot determine both parameters, saying why', () => {
		// Two parameters need two distinct x with events (existence of the Poisson MLE; common practice).
		const one = [
			{ T_mK: 20, count: 30, exposure_s: 10 },
			{ T_mK: 20, count: 25, exposure_s: 10 }
		];
		expect(() => fitActivation(one, options)).toThrow(/single value/);
		expect(() =>
			fitActivation(
				[
					{ T_mK: 20, count: 0, exposure_s: 10 },
					{ T_mK: 90, count: 0, exposure_s: 10 }
				],
				options
			)
		).toThrow(/all counts are zero/);
		expect(() =>
			fitActivation(
				[
					{ T_mK: 20, count: 0, exposure_s: 10 },
					{ T_mK: 90, count: 7, exposure_s: 10 }
				],
				options
			)
		).toThrow(/non-zero at a single value/);
		expect(() => fitActivation([{ T_mK: 20, count: 3, exposure_s: 1 }], options)).toThrow(/two/);
		expect(() => fitActivation([{ T_mK: 20, count: 3.5, exposure_s: 1 }, ...one], options)).toThrow(/points\[0\]\.count/);
		expect(() => fitActivation([{ T_mK: 20, count: 3, exposure_s: 0 }, ...one], options)).toThrow(/points\[0\]\.exposure_s/);
		expect(() => fitActivation([{ count: 3, exposure_s: 1 }, ...one], options)).toThrow(/no T_mK/);
		const op = { detuning: 0, damping: 1, drive: 1 };
		expect(() =>
			fitActivation(
				[
					{ T_mK: 20, count: 3, exposure_s: 1, operatingPoint: op },
					{ T_mK: 60, count: 3, exposure_s: 1 }
				],
				options
			)
		).toThrow(/only to escape/);
		expect(() =>
			fitActivation(
				[
					{ T_mK: 20, count: 3, exposure_s: 1, operatingPoint: op },
					{ T_mK: 60, count: 3, exposure_s: 1 }
				],
				{ ...options, process: 'escape' }
			)
		).toThrow(/reference/);
	});
});

describe('fitFromSimulation', () => {
	const R = 0.35;
	const W0 = 2.0;
	const lambdas = [0.02, 0.025, 0.03, 0.04, 0.05, 0.06];

	it('recovers a known exponent from exact data (both fitting paths)', () => {
		// ln W = ln W0 − R/λ exactly (REFERENCES.md, quantum activation: W ∝ e^{−R_A/λ}).
		for (const count of [1000, 5]) {
			const results = lambdas.map((lambda) => {
				const rate = W0 * Math.exp(-R / lambda);
				return { lambda, rate, count, exposure: count / rate };
			});
			const fit = fitFromSimulation(results);
			expect(fit.method).toBe(count >= MIN_COUNT_FOR_WLS ? 'wls' : 'poisson-ml');
			expect(fit.exponent).toBeCloseTo(R, 9);
			expect(fit.prefactor).toBeCloseTo(W0, 8);
			expect(fit.goodnessOfFit.value).toBeLessThan(1e-12);
			expect(fit.points.map((p) => p.inverseLambda)).toEqual(lambdas.map((l) => 1 / l));
		}
	});

	it('recovers the exponent within 3σ from noisy simulated counts', () => {
		// Poisson counts over a fixed exposure (seeded); truth within 3σ (normal approximation).
		const random = uniformStream(2024);
		const results = lambdas.map((lambda) => {
			const exposure = 40 / (W0 * Math.exp(-R / lambda));
			const count = poissonKnuth(W0 * Math.exp(-R / lambda) * exposure, random);
			return { lambda, rate: count / exposure, count, exposure };
		});
		const fit = fitFromSimulation(results);
		expect(Math.abs(fit.exponent - R)).toBeLessThan(3 * fit.exponent_sigma);
		expect(Math.abs(Math.log(fit.prefactor / W0))).toBeLessThan(3 * fit.lnPrefactor_sigma);
		expect(fit.exponent_sigma).toBeLessThan(0.05 * R);
	});

	it('rejects a rate that is not count/exposure, and bad λ', () => {
		// Rule: bad input gets a clear error that names the problem (RULES.md).
		const good = { lambda: 0.05, rate: 2, count: 20, exposure: 10 };
		expect(() => fitFromSimulation([good, { lambda: 0.03, rate: 5, count: 20, exposure: 10 }])).toThrow(
			/results\[1\]\.rate must equal count\/exposure/
		);
		expect(() => fitFromSimulation([good, { ...good, lambda: 0 }])).toThrow(/results\[1\]\.lambda/);
		expect(() => fitFromSimulation([good, good])).toThrow(/single value of 1\/λ/);
	});
});
