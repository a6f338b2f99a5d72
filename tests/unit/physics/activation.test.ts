// predictRate: the rate law of DESIGN.md ("Predicted rate"), its band and its range warnings.
import { describe, expect, it } from 'vitest';
import { predictRate, RANGE_MARGIN, type RateModel } from '$lib/physics/activation';

const h = 6.62607015e-34; // SI Brochure 9th ed. (exact)
const kB = 1.380649e-23; // SI Brochure 9th ed. (exact)

/** 1/(2n̄+1) = tanh(hf/2k_BT), from Bose–Einstein, written out here with Math.exp. */
function inverseNoiseFactor(f_GHz: number, T_mK: number): number {
	const x = (h * f_GHz * 1e9) / (kB * T_mK * 1e-3);
	const n = 1 / (Math.exp(x) - 1);
	return 1 / (2 * n + 1);
}

// Two-sided standard normal quantiles, from any statistics table (from memory):
// z(0.975) = 1.959964, z(0.84) = 0.994458 (68 % two-sided).
const Z95 = 1.959964;
const Z68 = 0.994458;

const model: RateModel = {
	process: 'switching',
	W0_per_s: 2.5e6,
	A: 12,
	mode_GHz: 5,
	nominal_mK: 15,
	W0_sigma: 0.2,
	A_sigma: 0.5,
	covariance: 0.06,
	fittedRange: { T_mK: [10, 120] },
	source: 'calibration'
};

describe('predictRate', () => {
	it('gives W0·e^{−A} where n̄ → 0', () => {
		// W = W0·exp(−A/(2n̄+1)) with n̄ = 0 (DESIGN.md "Predicted rate").
		const p = predictRate({ ...model, fittedRange: undefined }, { T_mK: 0 });
		expect(p.rate_per_s).toBeCloseTo(2.5e6 * Math.exp(-12), 10);
		// At 5 GHz and 5 mK, n̄ ≈ e^{−48}: indistinguishable from the T = 0 value.
		const cold = predictRate({ ...model, fittedRange: undefined }, { T_mK: 5 });
		expect(cold.rate_per_s / (2.5e6 * Math.exp(-12))).toBeCloseTo(1, 12);
	});

	it('follows the temperature through 2n̄ + 1', () => {
		// W0·exp(−A/(2n̄+1)), n̄ from Bose–Einstein computed in this test (REFERENCES.md).
		for (const T_mK of [20, 50, 100, 120]) {
			const expected = 2.5e6 * Math.exp(-12 * inverseNoiseFactor(5, T_mK));
			expect(predictRate(model, { T_mK }).rate_per_s / expected).toBeCloseTo(1, 12);
		}
		expect(predictRate(model, { T_mK: 100 }).rate_per_s).toBeGreaterThan(predictRate(model, { T_mK: 50 }).rate_per_s);
	});

	it('propagates the (ln W0, A) covariance into the band', () => {
		// ln W = ln W0 − A·x, so var ln W = σ0² + x²σA² − 2x·cov exactly (delta method on a
		// linear function; any statistics text).
		for (const T_mK of [10, 60, 110]) {
			const x = inverseNoiseFactor(5, T_mK);
			const lnW = Math.log(2.5e6) - 12 * x;
			const sd = Math.sqrt(0.2 ** 2 + x * x * 0.5 ** 2 - 2 * x * 0.06);
			const p95 = predictRate(model, { T_mK });
			expect(Math.log(p95.lower)).toBeCloseTo(lnW - Z95 * sd, 5);
			expect(Math.log(p95.upper)).toBeCloseTo(lnW + Z95 * sd, 5);
			const p68 = predictRate(model, { T_mK }, 0.68);
			expect(Math.log(p68.lower)).toBeCloseTo(lnW - Z68 * sd, 5);
			expect(Math.log(p68.upper)).toBeCloseTo(lnW + Z68 * sd, 5);
			expect(p95.warnings).toEqual([]);
		}
	});

	it('warns outside the fitted temperature range and says by how much', () => {
		// Warning rule stated in activation.ts: beyond max·(1 + margin) or below min/(1 + margin).
		expect(RANGE_MARGIN).toBe(0.1);
		expect(predictRate(model, { T_mK: 130 }).warnings).toEqual([]); // within 10 % of 120
		const hot = predictRate(model, { T_mK: 140 });
		expect(hot.warnings).toHaveLength(1);
		expect(hot.warnings[0]).toMatch(/140 mK .*10 % outside .*10–120 mK/);
		expect(predictRate(model, { T_mK: 8 }).warnings).toHaveLength(1);
		expect(predictRate(model, { T_mK: 9.5 }).warnings).toEqual([]);
	});

	it('says when the model has no uncertainty', () => {
		// A model without sigmas cannot give a band: lower = rate = upper, and the caller is told.
		const bare: RateModel = { ...model, W0_sigma: undefined, A_sigma: undefined, covariance: undefined };
		const p = predictRate(bare, { T_mK: 50 });
		expect(p.lower).toBe(p.rate_per_s);
		expect(p.upper).toBe(p.rate_per_s);
		expect(p.warnings.join(' ')).toMatch(/no uncertainty/);
	});

	it('scales A with (γ² + δ²)/ε² for escape from vacuum', () => {
		// A(op) = A_ref · s(op)/s(ref), s = (γ² + δ²)/ε² (DESIGN.md; REFERENCES.md facts of the trade).
		const escape: RateModel = {
			...model,
			process: 'escape',
			reference: { detuning: 0.3, damping: 0.4, drive: 1 },
			fittedRange: { T_mK: [10, 120], scale: [0.5, 3] }
		};
		const op = { detuning: 0.6, damping: 0.8, drive: 1.5 }; // s(op) = 1/2.25, s(ref) = 0.25: ratio 1.78
		const ratio = (0.6 ** 2 + 0.8 ** 2) / 1.5 ** 2 / ((0.3 ** 2 + 0.4 ** 2) / 1);
		const x = inverseNoiseFactor(5, 40);
		const p = predictRate(escape, { T_mK: 40, operatingPoint: op });
		expect(p.rate_per_s / (2.5e6 * Math.exp(-12 * ratio * x))).toBeCloseTo(1, 12);
		expect(p.warnings).toEqual([]);
		// At the reference itself the scale is 1.
		const atRef = predictRate(escape, { T_mK: 40, operatingPoint: escape.reference });
		expect(atRef.rate_per_s / (2.5e6 * Math.exp(-12 * x))).toBeCloseTo(1, 12);
		// Outside the fitted scale range: a warning naming the scale.
		const far = predictRate(escape, { T_mK: 40, operatingPoint: { detuning: 0, damping: 2, drive: 1 } });
		expect(far.warnings.join(' ')).toMatch(/scale 16 .*outside the fitted range 0.5–3/);
		// No calibrated scale range at all: the scaling is theory, and the caller is told.
		const uncalibrated = predictRate({ ...escape, fittedRange: { T_mK: [10, 120] } }, { T_mK: 40, operatingPoint: op });
		expect(uncalibrated.warnings.join(' ')).toMatch(/not calibrated/);
	});

	it('ignores an operating point for switching, with a warning', () => {
		// Only escape from vacuum scales with the operating point (DESIGN.md "Predicted rate").
		const op = { detuning: 1, damping: 1, drive: 3 };
		const p = predictRate(model, { T_mK: 50, operatingPoint: op });
		expect(p.rate_per_s).toBe(predictRate(model, { T_mK: 50 }).rate_per_s);
		expect(p.warnings.join(' ')).toMatch(/ignored/);
	});

	it('rejects bad models and conditions with errors that name the problem', () => {
		// Rule: bad input gets a clear error that names the problem (RULES.md).
		expect(() => predictRate(model, { T_mK: -1 })).toThrow(/T_mK/);
		expect(() => predictRate(model, { T_mK: 20 }, 1)).toThrow(/confidence/);
		expect(() => predictRate({ ...model, W0_per_s: 0 }, { T_mK: 20 })).toThrow(/W0_per_s/);
		expect(() => predictRate({ ...model, A: Number.NaN }, { T_mK: 20 })).toThrow(/model\.A/);
		expect(() => predictRate({ ...model, covariance: 1 }, { T_mK: 20 })).toThrow(/covariance/);
		const escape: RateModel = { ...model, process: 'escape' };
		expect(() => predictRate(escape, { T_mK: 20, operatingPoint: { detuning: 0, damping: 1, drive: 1 } })).toThrow(/reference/);
		expect(() =>
			predictRate(
				{ ...escape, reference: { detuning: 0, damping: 1, drive: 1 } },
				{ T_mK: 20, operatingPoint: { detuning: 0, damping: 1, drive: 0 } }
			)
		).toThrow(/drive/);
	});
});
