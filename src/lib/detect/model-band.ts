// The rate model's stated uncertainty carried to the log rate of one window: the band of true
// rates within which the rate detectors keep their false-alarm budget.
//
// ln W = ln W0 − A·x with x = s/(2n̄+1) (physics/activation.ts; s is the escape model's
// operating-point scale, 1 for switching), so with σ(ln W0) = W0_sigma, σ(A) = A_sigma and
// cov(ln W0, A) = covariance the log rate has variance
//   var(ln W) = W0_sigma² + x²·A_sigma² − 2x·covariance,
// the same propagation as predictRate's band. A model that states neither sigma gets
// DEFAULT_RATE_MODEL_UNCERTAINTY. The band is ±BAND_SIGMAS standard deviations: the detectors
// promise their budget for any true rate inside it.
import { noiseFactor } from '../physics/occupation';
import { DEFAULT_RATE_MODEL_UNCERTAINTY } from '../physics/rate-model-schema';
import { scaleFor, type RateProcess } from './expected';
import type { ParsedRunInfo } from './run-info';

/** Half-width of the model band, in standard deviations of ln W. */
export const BAND_SIGMAS = 2;
/** Reference multipliers are kept within e^±LN_REFERENCE_MAX of the prediction (a 16-fold band is already no prediction). */
export const LN_REFERENCE_MAX = Math.log(16);

export type ModelUncertainty = {
	W0_sigma: number;
	A_sigma: number;
	covariance: number;
	/** False when the default stood in for a model that states none. */
	stated: boolean;
	/** Operating-point scale s of x = s/(2n̄+1). */
	scale: number;
	mode_GHz: number;
	nominal_mK: number;
};

export function modelUncertainty(run: ParsedRunInfo, process: RateProcess): ModelUncertainty | null {
	const m = run.rateModels?.[process];
	if (!m) return null;
	const stated = m.W0_sigma !== undefined || m.A_sigma !== undefined;
	return {
		W0_sigma: stated ? (m.W0_sigma ?? 0) : DEFAULT_RATE_MODEL_UNCERTAINTY.W0_sigma,
		A_sigma: stated ? (m.A_sigma ?? 0) : DEFAULT_RATE_MODEL_UNCERTAINTY.A_sigma_fraction * m.A,
		covariance: stated ? (m.covariance ?? 0) : 0,
		stated,
		scale: process === 'escape' ? scaleFor(run, m) : 1,
		mode_GHz: m.mode_GHz,
		nominal_mK: run.nominal_mK ?? m.nominal_mK
	};
}

/** x = s/(2n̄+1) at a temperature: the coefficient of A in ln W. */
export const activationX = (u: ModelUncertainty, T_mK: number) => u.scale / noiseFactor(u.mode_GHz, T_mK);

/** σ(ln W) at x. Rounding can push a near-singular variance a hair below zero. */
export function lnRateSigma(u: ModelUncertainty, x: number): number {
	return Math.sqrt(Math.max(0, u.W0_sigma ** 2 + x * x * u.A_sigma ** 2 - 2 * x * u.covariance));
}

/** Half-width of the band of ln W at x. */
export const lnBandHalfWidth = (u: ModelUncertainty, x: number) => BAND_SIGMAS * lnRateSigma(u, x);

export const clampLnReference = (v: number) => Math.min(LN_REFERENCE_MAX, Math.max(-LN_REFERENCE_MAX, v));
