// A counted rate with its exact Poisson interval (Garwood, via $lib/stats) set against the rate
// model's prediction for the same exposure.
import { poissonInterval, poissonLowerTail, poissonUpperTail } from '../stats/poisson';

export type RateVerdict = 'no exposure' | 'no prediction' | 'as predicted' | 'above prediction' | 'below prediction';

export type RateComparison = {
	count: number;
	exposure_s: number;
	/** count / exposure; null without exposure. */
	rate_per_s: number | null;
	/** Exact two-sided interval on the rate at `confidence`; null without exposure. */
	interval_per_s: { lower: number; upper: number } | null;
	confidence: number;
	/** Predicted count over the same exposure; null without a rate model. */
	expected: number | null;
	expected_rate_per_s: number | null;
	/** Observed over predicted count; null without a prediction (Infinity when 0 was predicted and some seen). */
	ratio: number | null;
	/** Two-sided exact p-value of the count under the prediction: twice the smaller tail, at most 1. */
	pValue: number | null;
	verdict: RateVerdict;
};

export function compareRate(count: number, exposure_s: number, expected: number | null, confidence = 0.95): RateComparison {
	if (!Number.isInteger(count) || count < 0) throw new RangeError(`rate: count must be a whole number ≥ 0, got ${count}`);
	if (!Number.isFinite(exposure_s) || exposure_s < 0) throw new RangeError(`rate: exposure_s must be ≥ 0 seconds, got ${exposure_s}`);
	if (expected !== null && (!Number.isFinite(expected) || expected < 0))
		throw new RangeError(`rate: expected count must be ≥ 0, got ${expected}`);
	const base = { count, exposure_s, confidence, expected };
	if (exposure_s === 0) {
		return {
			...base,
			rate_per_s: null,
			interval_per_s: null,
			expected_rate_per_s: null,
			ratio: null,
			pValue: null,
			verdict: 'no exposure'
		};
	}
	const limits = poissonInterval(count, confidence);
	const interval_per_s = { lower: limits.lower / exposure_s, upper: limits.upper / exposure_s };
	const rate_per_s = count / exposure_s;
	if (expected === null) {
		return { ...base, rate_per_s, interval_per_s, expected_rate_per_s: null, ratio: null, pValue: null, verdict: 'no prediction' };
	}
	const pValue = Math.min(1, 2 * Math.min(poissonLowerTail(count, expected), poissonUpperTail(count, expected)));
	const ratio = expected > 0 ? count / expected : count === 0 ? 1 : Infinity;
	const alpha = 1 - confidence;
	const verdict: RateVerdict = pValue >= alpha ? 'as predicted' : count > expected ? 'above prediction' : 'below prediction';
	return { ...base, rate_per_s, interval_per_s, expected_rate_per_s: expected / exposure_s, ratio, pValue, verdict };
}
