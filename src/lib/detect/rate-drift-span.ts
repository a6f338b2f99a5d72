// A span of windows as rate_drift sums them (observed, predicted at the band's edges and at the
// nominal point, temperature), and the exact interval of an observed/predicted ratio.
import type { Frame } from '../protocol/frame';
import { poissonInterval } from '../stats/poisson';
import type { ProcessExpectation } from './expected';
import type { Span } from './rate-drift-state';
import { finiteOrNull } from './rate-evidence';
import type { RateDriftRule } from './rules';

export function extend(span: Span | null, frame: Frame, e: ProcessExpectation, T: number | null, up: number, down: number): Span {
	const s = span ?? {
		count: 0,
		expected: 0,
		expectedNominal: 0,
		T_sum: 0,
		measured: 0,
		windows: 0,
		expectedUp: 0,
		expectedDown: 0,
		fromSeq: frame.seq,
		from_ms: frame.t,
		toSeq: frame.seq,
		to_ms: frame.t
	};
	// A block restored from a snapshot from before the band has its windows at the prediction.
	s.expectedUp = (s.expectedUp ?? s.expected) + up;
	s.expectedDown = (s.expectedDown ?? s.expected) + down;
	s.count += e.count;
	s.expected += e.expected;
	s.expectedNominal += e.expectedNominal;
	if (T !== null) {
		s.T_sum += T;
		s.measured += 1;
	}
	s.windows += 1;
	s.toSeq = frame.seq;
	s.to_ms = frame.t;
	return s;
}

/** What the chart compares with: the temperature-following or the nominal prediction. */
export const chartExpected = (rule: RateDriftRule, span: Span) =>
	rule.prediction === 'temperature' ? span.expected : span.expectedNominal;
export const upperExpected = (rule: RateDriftRule, span: Span) => span.expectedUp ?? chartExpected(rule, span);
export const lowerExpected = (rule: RateDriftRule, span: Span) => span.expectedDown ?? chartExpected(rule, span);

// A span from an old snapshot lacks the band sums; the nominal-or-temperature choice is not known
// here, so the temperature prediction stands in (the pre-band chart's default).
const upOrChart = (s: Span) => s.expectedUp ?? s.expected;
const downOrChart = (s: Span) => s.expectedDown ?? s.expected;

export function join(a: Span | null, b: Span): Span {
	if (!a) return { ...b };
	return {
		count: a.count + b.count,
		expected: a.expected + b.expected,
		expectedNominal: a.expectedNominal + b.expectedNominal,
		T_sum: a.T_sum + b.T_sum,
		measured: a.measured + b.measured,
		windows: a.windows + b.windows,
		expectedUp: upOrChart(a) + upOrChart(b),
		expectedDown: downOrChart(a) + downOrChart(b),
		fromSeq: a.fromSeq,
		from_ms: a.from_ms,
		toSeq: b.toSeq,
		to_ms: b.to_ms
	};
}

export type RatioEstimate = {
	estimate: number | null;
	lower: number | null;
	upper: number | null;
	confidence: number;
	significant: boolean;
};

/**
 * Observed/predicted ratio with the exact (Garwood) interval of the observed Poisson count divided
 * by the prediction, which is treated as known. No prediction: nothing can be said.
 */
export function ratioEstimate(observed: number, expected: number, confidence: number): RatioEstimate {
	if (!(expected > 0)) return { estimate: null, lower: null, upper: null, confidence, significant: false };
	const { lower, upper } = poissonInterval(observed, confidence);
	return {
		estimate: observed / expected,
		lower: lower / expected,
		upper: finiteOrNull(upper / expected),
		confidence,
		significant: lower > expected || upper < expected
	};
}
