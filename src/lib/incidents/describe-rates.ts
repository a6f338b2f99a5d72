// Sentences for the rate kinds: a drift of the switching or escape rate (CUSUM) and a burst in a
// window or horizon (exact Poisson tail).
import type { Description, IncidentFacts } from './describe';
import { where } from './describe';
import { numAt, objAt, strAt, listAt, type Json } from './read';
import { chance, count, duration, ESCAPES, interval, num, percent, rateAgainst, SWITCHES, utcClock, WINDOWS } from './words';

const nounOf = (process: string | null) => (process === 'escape' ? ESCAPES : SWITCHES);
const rateName = (process: string | null) => (process === 'escape' ? 'escape rate' : 'switching rate');
const Cap = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

function ratioWords(r: Json | null): string {
	if (!r) return '';
	const est = numAt(r, 'estimate');
	if (est === null) return '';
	const conf = numAt(r, 'confidence');
	const lo = numAt(r, 'lower');
	const hi = numAt(r, 'upper');
	return `${num(est, 2)} times the prediction${conf ? `, ${percent(conf)} interval ${interval(lo, hi)}` : ` ${interval(lo, hi)}`}`;
}

function sinceWords(span: Json | null): string {
	const from_ms = numAt(span, 'from_ms');
	const to_ms = numAt(span, 'to_ms');
	const windows = numAt(span, 'windows');
	const w =
		windows === null
			? ''
			: ` (${count(windows, WINDOWS)}${from_ms !== null && to_ms !== null ? `, ${duration((to_ms - from_ms) / 1000)}` : ''})`;
	return from_ms === null ? `over the last ${windows === null ? 'windows' : count(windows, WINDOWS)}` : `since ${utcClock(from_ms)}${w}`;
}

function describeMismatch(f: IncidentFacts, process: string | null): Description {
	const ev = f.evidence;
	const what = `The ${rateName(process)}${where(f)} does not match its rate model at this operating point.`;
	const details: string[] = [];
	const b = objAt(ev, 'baseline');
	if (strAt(ev, 'found') === 'chart') {
		const since = objAt(ev, 'sinceChange');
		details.push(
			`Over ${count(numAt(since, 'windows') ?? 0, WINDOWS)} it counted ${count(numAt(since, 'observed') ?? 0, nounOf(process))} where the model predicted ${num(numAt(since, 'expected'), 3)}: ${ratioWords(objAt(ev, 'ratio'))}.`
		);
		details.push('The run’s own baseline is still being learned; until then this is reported as a mismatch rather than paged.');
	} else if (b) {
		details.push(
			`Over the first ${duration(numAt(b, 'learned_s') ?? 0)} the rate was ${num(numAt(b, 'ratio'), 2)} times the prediction ${interval(numAt(b, 'ratioLower'), numAt(b, 'ratioUpper'))}, outside the model’s band ${interval(numAt(b, 'modelBandLower'), numAt(b, 'modelBandUpper'))}.`
		);
		details.push('Drift is judged against this run’s own rate from now on.');
	}
	return { what, details };
}

export function describeRateDrift(f: IncidentFacts): Description {
	const ev = f.evidence;
	const process = strAt(ev, 'process');
	if (f.key?.endsWith(':model') || strAt(ev, 'found')) return describeMismatch(f, process);
	const noun = nounOf(process);
	const direction = strAt(ev, 'direction');
	const since = objAt(ev, 'sinceChange');
	const horizon = objAt(ev, 'horizon');
	const statistic = numAt(ev, 'statistic');
	if (!since && statistic === 0) {
		// The clearing: back within the reference band.
		const details: string[] = [];
		if (horizon) details.push(horizonSentence(horizon, noun));
		return {
			what: `The ${rateName(process)}${where(f)} is back within its reference band and the drift statistic is back at zero.`,
			details
		};
	}
	const what = `The ${rateName(process)}${where(f)} drifted ${direction === 'down' ? 'below' : 'above'} its prediction ${sinceWords(since)}.`;
	const details: string[] = [];
	if (since) {
		details.push(
			`In that time it counted ${count(numAt(since, 'observed') ?? 0, noun)} where the model predicted ${num(numAt(since, 'expected'), 3)}: ${ratioWords(objAt(ev, 'ratio'))}.`
		);
	}
	const ref = objAt(ev, 'reference');
	// A model that states no uncertainty allows only its prediction: nothing to say about a range.
	if (ref && numAt(ref, 'ratioLower') !== null && Math.abs((numAt(ref, 'ratioUpper') ?? 1) - numAt(ref, 'ratioLower')!) > 1e-6) {
		const basis = strAt(ref, 'basis') === 'baseline' ? 'this run’s own baseline' : 'the rate model’s uncertainty';
		details.push(
			`Given ${basis}, anything from ${num(numAt(ref, 'ratioLower'), 2)} to ${num(numAt(ref, 'ratioUpper'), 2)} times the prediction would have been normal.`
		);
	}
	if (horizon) details.push(horizonSentence(horizon, noun));
	if (statistic !== null) {
		const h = numAt(ev, 'decisionInterval');
		details.push(
			`The drift statistic reached ${num(statistic, 3)} against its decision limit of ${num(h, 3)}, set so that a false alarm comes about once in ${num(numAt(ev, 'falseAlarmEvery_days'), 3)} days.`
		);
	}
	const explanation = strAt(ev, 'explanation');
	if (explanation) details.push(explanation);
	return { what, details };
}

function horizonSentence(h: Json, noun: ReturnType<typeof nounOf>): string {
	const observed = numAt(h, 'observed') ?? 0;
	const expected = numAt(h, 'expected') ?? 0;
	const exposure_s = numAt(h, 'exposure_s') ?? 0;
	const windows = numAt(h, 'windows') ?? 0;
	const allowed = { lower: numAt(h, 'referenceLower'), upper: numAt(h, 'referenceUpper') };
	return `Over the last ${count(windows, WINDOWS)}: ${rateAgainst(noun, observed, expected, exposure_s, allowed)}.`;
}

export function describeSwitchingBurst(f: IncidentFacts): Description {
	const ev = f.evidence;
	const process = strAt(ev, 'process');
	const noun = nounOf(process);
	const worst = objAt(ev, 'worst');
	// Only the clearing carries the worst p-value seen while open.
	const isClear = 'worstPValue' in ev;
	if (!worst) return { what: `Too many ${noun.many}${where(f)}.`, details: [] };
	const windows = numAt(worst, 'windows') ?? 1;
	const from_ms = numAt(worst, 'from_ms');
	const to_ms = numAt(worst, 'to_ms');
	const span =
		windows <= 1 || from_ms === null || to_ms === null
			? `in the window at ${to_ms === null ? 'the time shown' : utcClock(to_ms)}`
			: `over ${count(windows, WINDOWS)} from ${utcClock(from_ms)} to ${utcClock(to_ms)}`;
	const observed = numAt(worst, 'observed') ?? 0;
	const expected = numAt(worst, 'expected') ?? 0;
	const tested = numAt(worst, 'testedAgainst') ?? expected;
	const exposure_s = numAt(worst, 'exposure_s') ?? 0;
	const lowerEdge = tested > 0 ? (expected * expected) / tested : 0;
	if (isClear) {
		return {
			what: `${Cap(noun.many)}${where(f)} are back within the predicted rate.`,
			details: [`Most recently ${span}: ${rateAgainst(noun, observed, expected, exposure_s, { lower: lowerEdge, upper: tested })}.`]
		};
	}
	const details = [
		`That is ${rateAgainst(noun, observed, expected, exposure_s, { lower: lowerEdge, upper: tested })}${tested > expected * (1 + 1e-6) ? ', the range being what the rate model’s uncertainty allows' : ''}.`,
		`At the upper edge of that range, ${count(numAt(worst, 'thresholdCount') ?? 0, noun)} or more would already have been flagged; the chance of ${num(observed)} or more is ${chance(numAt(worst, 'pValue'))}, against a limit of ${chance(numAt(worst, 'alpha'))}.`
	];
	const others = listAt(ev, 'tests').filter((t) => t !== worst && strAt(t, 'scope') !== strAt(worst, 'scope'));
	for (const t of others) {
		details.push(
			`${strAt(t, 'scope') === 'horizon' ? `Over the last ${count(numAt(t, 'windows') ?? 0, WINDOWS)}` : 'In the latest window'}: ${count(numAt(t, 'observed') ?? 0, noun)} where ${num(numAt(t, 'expected'), 2)} were predicted.`
		);
	}
	return { what: `${count(observed, noun)} ${span}${where(f)}, where the rate model predicts ${num(expected, 2)}.`, details };
}
