// Rate models and run information shared by the detector tests (an invented setup).
import type { RunInfo } from '../../../src/lib/detect';

// These models state zero uncertainty (W0_sigma = A_sigma = 0): the tests that use them check the
// detectors' statistics against their textbook definitions, which compare with the prediction
// itself. A model that states none would get the declared default band (model-band.ts), tested in
// uncertainty.test.ts with `uncertain(...)`.
const exact = { W0_sigma: 0, A_sigma: 0 };

/** Temperature-independent switching at W0 per second (A = 0): μ = W0 × dwell_s exactly. */
export const flatSwitching = (W0_per_s: number) => ({
	process: 'switching' as const,
	W0_per_s,
	A: 0,
	mode_GHz: 5,
	nominal_mK: 20,
	...exact
});

/**
 * A low-frequency mode whose rate follows the fridge: hf/k_B = 48 mK at 1 GHz, so between 20 and
 * 30 mK the noise factor goes from 1.20 to 1.50 and W from 0.50 to 1.38 per second.
 */
export const warmSwitching = { process: 'switching' as const, W0_per_s: 74.2, A: 6, mode_GHz: 1, nominal_mK: 20, ...exact };

export const run6 = (rateModels?: RunInfo['rateModels'], extra: Partial<RunInfo> = {}): RunInfo => ({
	runId: 'run-test',
	states: 6,
	...(rateModels ? { rateModels } : {}),
	...extra
});

/** rate_drift rules that chart against the model for the whole run (no learned baseline). */
export const noBaseline = { baseline_h: 0 };

/** A budget of one false alarm per `windows` one-second windows, in the rules' unit (days). */
export const budgetOf = (windows: number) => windows / 86_400;
