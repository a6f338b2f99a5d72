// rate_drift's learned baseline: the run's ratio observed/predicted over its first hours, the
// reference interval it gives at a temperature, and their evidence.
import type { Frame } from '../protocol/frame';
import { poissonInterval } from '../stats/poisson';
import type { DetectorContext } from './detector';
import type { JsonValue } from './events';
import type { RateProcess } from './expected';
import { BAND_SIGMAS, clampLnReference, lnBandHalfWidth, type ModelUncertainty, modelUncertainty } from './model-band';
import { chartExpected, lowerExpected, upperExpected } from './rate-drift-span';
import { type Baseline, BASELINE_CONFIDENCE, freshBaseline, type ProcessState, type Span } from './rate-drift-state';
import type { RateDriftRule } from './rules';

/** Processes that share the rule's budget: those it watches that have a rate model (at least 1). */
export function budgetShare(rule: RateDriftRule, run: DetectorContext<'rate_drift'>['run']): number {
	return Math.max(1, rule.processes.filter((p) => run.rateModels?.[p]).length);
}

/** [lo, hi] bounding ln(true/predicted) at x: the model's band while learning, then the baseline's (file comment). */
export function referenceInterval(b: Baseline, u: ModelUncertainty, x: number): [number, number] {
	const band = lnBandHalfWidth(u, x);
	if (b.phase === 'learning') return [clampLnReference(-band), clampLnReference(band)];
	const spread = BAND_SIGMAS * u.A_sigma * Math.abs(x - b.x!);
	let lo = b.lnLo! - spread;
	let hi = b.lnHi! + spread;
	if (!b.mismatch) {
		lo = Math.max(lo, -band);
		hi = Math.min(hi, band);
	}
	if (lo > hi) lo = hi = (lo + hi) / 2;
	return [clampLnReference(lo), clampLnReference(hi)];
}

/** Adds one window to the baseline; once baseline_h hours are in, sets it. Returns whether it was set outside the model's band. */
export function learn(
	b: Baseline,
	u: ModelUncertainty,
	frame: Frame,
	count: number,
	chart: number,
	x: number,
	baseline_h: number
): boolean {
	b.learned_s += frame.window_s;
	b.count += count;
	b.expected += chart;
	b.xWeighted += chart * x;
	b.fromSeq ??= frame.seq;
	b.toSeq = frame.seq;
	if (b.learned_s < baseline_h * 3600 || !(b.expected > 0)) return false;
	const { lower, upper } = poissonInterval(b.count, BASELINE_CONFIDENCE);
	const lnLo = lower > 0 ? Math.log(lower / b.expected) : -Infinity;
	const lnHi = Math.log(upper / b.expected);
	b.x = b.xWeighted / b.expected;
	const band = lnBandHalfWidth(u, b.x);
	const wasMismatch = b.mismatch;
	b.mismatch = wasMismatch || lnLo > band || lnHi < -band;
	b.lnEstimate = clampLnReference(Math.log(Math.max(b.count, 0.5) / b.expected));
	b.lnLo = clampLnReference(b.mismatch ? lnLo : Math.max(lnLo, -band));
	b.lnHi = clampLnReference(b.mismatch ? lnHi : Math.min(lnHi, band));
	b.phase = 'set';
	return b.mismatch && !wasMismatch;
}

/** What the chart compared with over the span: the model's band or the run's baseline. */
export function referenceEvidence(
	ps: ProcessState,
	p: RateProcess,
	since: Span,
	rule: RateDriftRule,
	ctx: DetectorContext<'rate_drift'>
): { [key: string]: JsonValue } {
	const chart = chartExpected(rule, since);
	const b = ps.baseline ?? freshBaseline();
	const u = modelUncertainty(ctx.run, p);
	return {
		basis: b.phase === 'set' ? 'baseline' : 'model band',
		expectedUpper: upperExpected(rule, since),
		expectedLower: lowerExpected(rule, since),
		ratioUpper: chart > 0 ? upperExpected(rule, since) / chart : null,
		ratioLower: chart > 0 ? lowerExpected(rule, since) / chart : null,
		budgetShare: budgetShare(rule, ctx.run),
		baseline: u ? baselineEvidence(b, u) : null,
		uncertainty: u ? uncertaintyEvidence(u) : null
	};
}

export function baselineEvidence(b: Baseline, u: ModelUncertainty): { [key: string]: JsonValue } {
	const band = b.x === null ? null : lnBandHalfWidth(u, b.x);
	return {
		phase: b.phase,
		learned_s: b.learned_s,
		fromSeq: b.fromSeq,
		toSeq: b.toSeq,
		observed: b.count,
		expected: b.expected,
		ratio: b.lnEstimate === null ? null : Math.exp(b.lnEstimate),
		/** Reference interval of observed/predicted at the baseline's temperature. */
		ratioLower: b.lnLo === null ? null : Math.exp(b.lnLo),
		ratioUpper: b.lnHi === null ? null : Math.exp(b.lnHi),
		modelBandLower: band === null ? null : Math.exp(-band),
		modelBandUpper: band === null ? null : Math.exp(band),
		mismatch: b.mismatch
	};
}

export function uncertaintyEvidence(u: ModelUncertainty): { [key: string]: JsonValue } {
	return { W0_sigma: u.W0_sigma, A_sigma: u.A_sigma, covariance: u.covariance, stated: u.stated, bandSigmas: BAND_SIGMAS };
}
