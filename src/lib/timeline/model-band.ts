// The predicted band of a bucket's count: the rate model's stated uncertainty (detect/model-band,
// ±BAND_SIGMAS in ln W) carried to the bucket's expected count at its mean measured temperature.
// The expected count itself already sums each window's prediction at its own temperature; the
// band's width uses the bucket's mean temperature, a close stand-in because σ(ln W) varies slowly.
import { activationX, lnBandHalfWidth, type ModelUncertainty } from '../detect/model-band';

export type CountBand = { lower: number; upper: number };

export function expectedBand(expected: number | null, u: ModelUncertainty | null, T_mK: number | null): CountBand | null {
	if (expected === null || !u) return null;
	const h = lnBandHalfWidth(u, activationX(u, T_mK ?? u.nominal_mK));
	return { lower: expected * Math.exp(-h), upper: expected * Math.exp(h) };
}
