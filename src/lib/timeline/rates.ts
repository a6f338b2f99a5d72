// A bucket's observed rate with its exact Poisson interval (Garwood, stats/poisson) and the
// predicted rate with the model's band, both per second of exposure, for the rate tracks.
import { poissonInterval } from '../stats/poisson';
import type { CountBand } from './model-band';

export type RatePoint = {
	rate_per_s: number;
	lower_per_s: number;
	upper_per_s: number;
	expected_per_s: number | null;
	band: { lower_per_s: number; upper_per_s: number } | null;
};

/** Null when the bucket had no exposure (nothing to divide by). */
export function ratePoint(
	count: number,
	exposure_s: number,
	expected: number | null,
	band: CountBand | null,
	confidence = 0.95
): RatePoint | null {
	if (!(exposure_s > 0)) return null;
	const ci = poissonInterval(count, confidence);
	return {
		rate_per_s: count / exposure_s,
		lower_per_s: ci.lower / exposure_s,
		upper_per_s: ci.upper / exposure_s,
		expected_per_s: expected === null ? null : expected / exposure_s,
		band: band ? { lower_per_s: band.lower / exposure_s, upper_per_s: band.upper / exposure_s } : null
	};
}
