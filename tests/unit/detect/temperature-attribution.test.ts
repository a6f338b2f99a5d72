// Temperature attribution by a Poisson fit (temperature-attribution.ts), checked against results
// derived here independently: the closed-form maximum of a two-group Poisson model (the ratio of
// sums per group, McCullagh & Nelder, Generalized Linear Models, 2nd ed., the saturated model;
// from memory) and a profile-likelihood solve by bisection with a finite-difference Hessian; and
// on seeded Poisson windows from the activation law W = W0·exp(−A/(2n̄+1)) with a known cause.
import { describe, expect, it } from 'vitest';
import { attributeToTemperature, fitPoissonGlm } from '../../../src/lib/detect/temperature-attribution';
import { DetectorEngine } from '../../../src/lib/detect';
import { noiseFactor } from '../../../src/lib/physics/occupation';
import { uniformStream, poissonKnuth } from '../../support/random';
import { frame } from './frames';
import { run6 } from './models';

describe('the Poisson fit (IRLS)', () => {
	it('two groups: the maximum is the ratio of sums in each group, variances 1/Σy (saturated model, closed form)', () => {
		const y = [3, 0, 5, 12, 9, 7];
		const E = [2.1, 1.4, 3.0, 4.2, 3.3, 2.5];
		const group = [0, 0, 0, 1, 1, 1];
		const fit = fitPoissonGlm(
			y,
			E.map(Math.log),
			group.map((g) => [1, g])
		)!;
		const sum = (g: number, v: number[]) => v.reduce((s, x, i) => s + (group[i] === g ? x : 0), 0);
		const r0 = sum(0, y) / sum(0, E);
		const r1 = sum(1, y) / sum(1, E);
		expect(fit.coefficients[0]).toBeCloseTo(Math.log(r0), 10);
		expect(fit.coefficients[1]).toBeCloseTo(Math.log(r1 / r0), 10);
		expect(fit.covariance[0][0]).toBeCloseTo(1 / sum(0, y), 10);
		expect(fit.covariance[1][1]).toBeCloseTo(1 / sum(0, y) + 1 / sum(1, y), 10);
		expect(fit.covariance[0][1]).toBeCloseTo(-1 / sum(0, y), 10);
	});

	it('a continuous covariate: agrees with a profile-likelihood bisection and a finite-difference Fisher information', () => {
		const rnd = uniformStream(20261202);
		const z = Array.from({ length: 80 }, (_, i) => -0.3 + (0.6 * i) / 79);
		const E = z.map(() => 0.5 + 2 * rnd());
		const y = z.map((zi, i) => poissonKnuth(E[i] * Math.exp(0.2 - 2.5 * zi), rnd));
		const fit = fitPoissonGlm(
			y,
			E.map(Math.log),
			z.map((zi) => [1, zi])
		)!;
		// For fixed b1 the best b0 is ln(Σy / Σ E·e^{b1 z}); the b1 score Σ z (y − μ) then falls
		// monotonically in b1, so bisection finds its root.
		const b0Of = (b1: number) => Math.log(y.reduce((s, v) => s + v, 0) / E.reduce((s, e, i) => s + e * Math.exp(b1 * z[i]), 0));
		const score = (b1: number) => z.reduce((s, zi, i) => s + zi * (y[i] - E[i] * Math.exp(b0Of(b1) + b1 * zi)), 0);
		let lo = -20,
			hi = 20;
		for (let k = 0; k < 200; k++) {
			const mid = (lo + hi) / 2;
			if (score(mid) > 0) lo = mid;
			else hi = mid;
		}
		const b1 = (lo + hi) / 2;
		expect(fit.coefficients[1]).toBeCloseTo(b1, 8);
		expect(fit.coefficients[0]).toBeCloseTo(b0Of(b1), 8);
		// Observed information = −Hessian of the log-likelihood, by central differences.
		const ll = (a: number, b: number) => y.reduce((s, v, i) => s + v * (Math.log(E[i]) + a + b * z[i]) - E[i] * Math.exp(a + b * z[i]), 0);
		const [a, b] = fit.coefficients;
		const h = 1e-4;
		const haa = -(ll(a + h, b) - 2 * ll(a, b) + ll(a - h, b)) / h ** 2;
		const hbb = -(ll(a, b + h) - 2 * ll(a, b) + ll(a, b - h)) / h ** 2;
		const hab = -(ll(a + h, b + h) - ll(a + h, b - h) - ll(a - h, b + h) + ll(a - h, b - h)) / (4 * h ** 2);
		const det = haa * hbb - hab * hab;
		expect(fit.covariance[0][0]).toBeCloseTo(hbb / det, 5);
		expect(fit.covariance[1][1]).toBeCloseTo(haa / det, 4);
		expect(fit.covariance[0][1]).toBeCloseTo(-hab / det, 5);
		// and the truth (b0 = 0.2, b1 = −2.5) lies within 3 standard errors
		expect(Math.abs(b - -2.5)).toBeLessThan(3 * Math.sqrt(fit.covariance[1][1]));
	});

	it('refuses bad input by name, and has no maximum when every count is zero', () => {
		expect(() => fitPoissonGlm([1.5], [0], [[1]])).toThrow(/y\[0\] must be a whole number/);
		expect(() => fitPoissonGlm([1, 2], [0], [[1], [1]])).toThrow(/same length/);
		expect(() => fitPoissonGlm([1], [NaN], [[1]])).toThrow(/offset\[0\] must be finite/);
		expect(
			fitPoissonGlm(
				[0, 0],
				[0, 0],
				[
					[1, 0],
					[1, 1]
				]
			)
		).toBeNull();
		const input = { windows: [], x_nominal: 0.9, modelSlope: 6, chartLogExcess: 0.2, chartFollowsTemperature: true };
		expect(() => attributeToTemperature({ ...input, confidence: 1 })).toThrow(/confidence must lie strictly between 0 and 1/);
		expect(() => attributeToTemperature({ ...input, confidence: 0.95, modelSlope: -1 })).toThrow(/modelSlope must be ≥ 0/);
	});
});

// An invented setup: a 1 GHz mode (hf/k_B = 48 mK) with a model A = 6 fitted at 13 mK, where the
// rate is 2 per second. In the "wrong A" cases the device's true A is 7, with the same rate at
// 13 mK, so at 25–27 mK it switches 1.25× faster than the model says (exp(x_nom − x) = 1.25).
// Stated as exact, and judged against from the first window (no learned baseline): these cases test
// what the temperature explains, not the model's band (uncertainty.test.ts covers that).
const model = { process: 'switching' as const, W0_per_s: 600, A: 6, mode_GHz: 1, nominal_mK: 13, W0_sigma: 0, A_sigma: 0 };
const x = (T_mK: number) => 1 / noiseFactor(1, T_mK);
const modelRate = (T_mK: number) => 600 * Math.exp(-6 * x(T_mK));
const trueRateA7 = (T_mK: number) => 600 * Math.exp(x(13)) * Math.exp(-7 * x(T_mK));

/** The first rate_drift opening on seeded Poisson windows, one a second. */
function firstOpening(seed: number, T_mK: (i: number) => number, rate: (i: number, T_mK: number) => number) {
	const rnd = uniformStream(seed);
	const rules = { switching_burst: { enabled: false }, rate_drift: { ratioUp: 1.25, horizonWindows: 3600, baseline_h: 0 } };
	const engine = new DetectorEngine(rules, run6({ switching: model }));
	for (let i = 1; i <= 9000; i++) {
		const T = T_mK(i);
		const open = engine
			.onFrame({ ...frame(i, 0.95), switches: poissonKnuth(rate(i, T), rnd), aux: { mxc_mK: T } })
			.find((e) => e.kind === 'rate_drift' && e.type === 'open');
		if (open) return open;
	}
	throw new Error('rate_drift never opened');
}
// These are statistical checks, not certainties: over seeds 1–20 of the shared generator the
// warming case comes out "explained" 19 times, the wandering detuning "unexplained" 19 times and the
// steady warm fridge "cannot tell" 16 times (the others: a confident call either way). The five
// seeds are consecutive ones on which all three hold; a change that lowers those rates shows here.
const SEEDS = [4, 5, 6, 7, 8];
const warming = (i: number) => (i <= 1200 ? 13 : i <= 2400 ? 13 + (13 * (i - 1200)) / 1200 : 26 + Math.sin((2 * Math.PI * i) / 300));
const wandering = (i: number) => 19.5 + 6.5 * Math.sin((2 * Math.PI * i) / 600);

describe('rate_drift: what the temperature explains (seeded Poisson windows)', () => {
	it('the checked premise: a true A = 7 against the model’s 6 gives 1.25× at 25–27 mK (activation law)', () => {
		for (const T of [25, 26, 27]) expect(trueRateA7(T) / modelRate(T)).toBeGreaterThan(1.22);
		expect(trueRateA7(26) / modelRate(26)).toBeCloseTo(1.25, 2);
	});

	it('a temperature-caused excess with a wrong A is explained by temperature: the measured slope is −7 and nothing is left at 13 mK', () => {
		for (const seed of SEEDS) {
			const open = firstOpening(seed, warming, (_i, T) => trueRateA7(T));
			const ev = open.evidence as any;
			expect(ev.explainedByTemperature, `seed ${seed}`).toBe(true);
			expect(ev.temperatureShare).toBeGreaterThan(0.5);
			expect(ev.temperatureShareInterval[0]).toBeGreaterThan(0);
			expect(ev.residualInterval[0]).toBeLessThanOrEqual(1);
			expect(ev.residualInterval[1]).toBeGreaterThanOrEqual(1);
			// The fit measured the temperature's slope (the true −A = −7), not the model's −6.
			const [lower, upper] = ev.temperatureFit.temperatureSlopeInterval;
			expect(ev.temperatureFit.temperatureSlope).toBeLessThan(-6);
			expect(lower).toBeLessThan(-7);
			expect(upper).toBeGreaterThan(-7);
			expect(ev.explanation).toMatch(/^Explained by temperature/);
			if (open.type === 'open') expect(open.summary).toMatch(/; explained by the fridge temperature\)$/);
		}
	});

	it('a detuning (a constant 1.25× factor) while the temperature varies is not explained: the slope is the model’s own', () => {
		for (const seed of SEEDS) {
			const ev = firstOpening(seed, wandering, (i, T) => modelRate(T) * (i > 2400 ? 1.25 : 1)).evidence as any;
			expect(ev.explainedByTemperature, `seed ${seed}`).toBe(false);
			expect(ev.temperatureShareInterval[1]).toBeLessThan(0.5);
			expect(ev.explanation).toMatch(/^Unexplained by temperature/);
		}
	});

	it('a detuning at a steady temperature is not explained, at the nominal point and away from it', () => {
		for (const seed of SEEDS) {
			const atNominal = firstOpening(
				seed,
				() => 13,
				(i, T) => modelRate(T) * (i > 1200 ? 1.25 : 1)
			).evidence as any;
			expect(atNominal.explainedByTemperature, `seed ${seed}`).toBe(false);
			expect(atNominal.temperatureFit.reason).toBe('temperature_at_nominal');
			expect(atNominal.residualInterval[0]).toBeGreaterThan(1);
			const warm = firstOpening(
				seed,
				() => 26,
				(i, T) => modelRate(T) * (i > 1200 ? 1.25 : 1)
			).evidence as any;
			expect(warm.explainedByTemperature, `seed ${seed}`).toBe(false);
			expect(warm.temperatureFit.reason).toBe('changed_at_steady_temperature');
			expect(warm.explanation).toMatch(/^Unexplained by temperature/);
		}
	});

	it('a steady warm fridge with a wrong A from the start: cannot tell (no onset, no spread), never "explained" nor "unexplained"', () => {
		for (const seed of SEEDS) {
			const open = firstOpening(
				seed,
				() => 26,
				(_i, T) => trueRateA7(T)
			);
			const ev = open.evidence as any;
			expect(ev.explainedByTemperature, `seed ${seed}`).toBeNull();
			expect(ev.temperatureFit.reason).toBe('temperature_steady');
			expect(ev.explanation).toMatch(/^Cannot tell whether the temperature explains it/);
			if (open.type === 'open') expect(open.summary).toMatch(/cannot tell whether the fridge temperature explains it/);
		}
	});
});
