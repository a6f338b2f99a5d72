// The model band of detect/model-band.ts against physics/activation.ts's predictRate, which
// propagates (ln W0, A) and their covariance to ln W at the same x = s/(2n̄+1): its band at 2σ
// (two-sided 95.45 %) must be the detectors' band, for switching and for a scaled escape model.
import { describe, expect, it } from 'vitest';
import { predictRate } from '../../../src/lib/physics/activation';
import { parseRunInfo } from '../../../src/lib/detect';
import { activationX, lnBandHalfWidth, modelUncertainty } from '../../../src/lib/detect/model-band';
import { DEFAULT_RATE_MODEL_UNCERTAINTY } from '../../../src/lib/physics/rate-model-schema';

const TWO_SIGMA = 0.9544997361036416;

describe('model band', () => {
	const switching = {
		process: 'switching' as const,
		W0_per_s: 74.2,
		A: 6,
		mode_GHz: 1,
		nominal_mK: 10,
		W0_sigma: 0.12,
		A_sigma: 0.4,
		covariance: 0.03,
		source: 'calibration' as const
	};
	const reference = { detuning: 0.1, damping: 1, drive: 2 };
	const escape = { ...switching, process: 'escape' as const, W0_per_s: 500, A: 9, reference };

	it('is predictRate’s 2σ band of ln W at each temperature (switching, with covariance)', () => {
		const run = parseRunInfo({ states: 6, rateModels: { switching } });
		const u = modelUncertainty(run, 'switching')!;
		for (const T_mK of [10, 20, 40]) {
			const p = predictRate(switching, { T_mK }, TWO_SIGMA);
			expect(lnBandHalfWidth(u, activationX(u, T_mK))).toBeCloseTo(Math.log(p.upper / p.rate_per_s), 9);
			expect(lnBandHalfWidth(u, activationX(u, T_mK))).toBeCloseTo(Math.log(p.rate_per_s / p.lower), 9);
		}
	});

	it('scales x with the escape model’s operating point as predictRate does', () => {
		const operatingPoint = { detuning: 0.3, damping: 1.2, drive: 2 };
		const run = parseRunInfo({ states: 6, rateModels: { escape }, operatingPoint });
		const u = modelUncertainty(run, 'escape')!;
		expect(u.scale).not.toBeCloseTo(1, 3);
		const p = predictRate(escape, { T_mK: 25, operatingPoint }, TWO_SIGMA);
		expect(lnBandHalfWidth(u, activationX(u, 25))).toBeCloseTo(Math.log(p.upper / p.rate_per_s), 9);
	});

	it('a model that states no uncertainty gets the declared default; one that states 0 keeps 0', () => {
		const { W0_sigma: _s, A_sigma: _a, covariance: _c, ...bare } = switching;
		const u = modelUncertainty(parseRunInfo({ states: 6, rateModels: { switching: bare } }), 'switching')!;
		expect(u).toMatchObject({
			stated: false,
			W0_sigma: DEFAULT_RATE_MODEL_UNCERTAINTY.W0_sigma,
			A_sigma: DEFAULT_RATE_MODEL_UNCERTAINTY.A_sigma_fraction * 6,
			covariance: 0
		});
		const exact = modelUncertainty(parseRunInfo({ states: 6, rateModels: { switching: { ...bare, W0_sigma: 0 } } }), 'switching')!;
		expect(exact).toMatchObject({ stated: true, W0_sigma: 0, A_sigma: 0 });
		expect(lnBandHalfWidth(exact, 1)).toBe(0);
	});
});
