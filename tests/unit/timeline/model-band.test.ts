// The band around a bucket's predicted count: e^(±2σ) with σ² = W0_sigma² + x²·A_sigma² − 2x·cov
// (first-order propagation through ln W = ln W0 − A·x; Bevington & Robinson, Data Reduction and
// Error Analysis, 3rd ed., eq. 3.13), x = 1/(2n̄+1) with n̄ the Bose–Einstein occupation.
import { describe, expect, it } from 'vitest';
import type { ModelUncertainty } from '../../../src/lib/detect/model-band';
import { expectedBand } from '../../../src/lib/timeline/model-band';

// CODATA 2018 exact SI values (NIST).
const h_J_s = 6.62607015e-34;
const k_J_per_K = 1.380649e-23;
const nBar = (f_GHz: number, T_mK: number) => 1 / (Math.exp((h_J_s * f_GHz * 1e9) / (k_J_per_K * T_mK * 1e-3)) - 1);

const u: ModelUncertainty = { W0_sigma: 0.1, A_sigma: 0.5, covariance: 0.02, stated: true, scale: 1, mode_GHz: 5, nominal_mK: 12 };

describe('expectedBand', () => {
	it('spreads the expected count by e^(±2σ(ln W)) at the bucket temperature', () => {
		const T = 60;
		const x = 1 / (2 * nBar(5, T) + 1);
		const sigma = Math.sqrt(0.1 ** 2 + x * x * 0.5 ** 2 - 2 * x * 0.02);
		const band = expectedBand(40, u, T)!;
		expect(band.lower).toBeCloseTo(40 * Math.exp(-2 * sigma), 9);
		expect(band.upper).toBeCloseTo(40 * Math.exp(2 * sigma), 9);
	});

	it('uses the nominal temperature when the bucket has none, and nothing without a model or a prediction', () => {
		const x = 1 / (2 * nBar(5, 12) + 1);
		const sigma = Math.sqrt(0.1 ** 2 + x * x * 0.25 - 2 * x * 0.02);
		expect(expectedBand(10, u, null)!.upper).toBeCloseTo(10 * Math.exp(2 * sigma), 9);
		expect(expectedBand(null, u, 20)).toBeNull();
		expect(expectedBand(10, null, 20)).toBeNull();
	});
});
