// What a rate_drift finding carries and says: the rule, the horizon's ratio, the temperature fit,
// and the sentence that explains the opening.
import { noiseFactor } from '../physics/occupation';
import type { CusumDesign } from './cusum-design';
import type { DetectorContext } from './detector';
import type { Evidence, JsonValue } from './events';
import { compileRates, type RateProcess } from './expected';
import { referenceEvidence } from './rate-drift-baseline';
import { chartExpected, ratioEstimate, type RatioEstimate } from './rate-drift-span';
import {
	H_COUNT,
	H_DOWN,
	H_EXPECTED,
	H_EXPOSURE,
	H_MEASURED,
	H_NOMINAL,
	H_SEQ,
	H_T_MS,
	H_T_SUM,
	H_UP,
	type ProcessState,
	type Span
} from './rate-drift-state';
import { finiteOrNull, fmt, rateModelEvidence } from './rate-evidence';
import type { RateDriftRule } from './rules';
import { oldest, type Sliding, valueAt } from './sliding';
import { attributeToTemperature, type TemperatureAttribution } from './temperature-attribution';

export function ruleEvidence(rule: RateDriftRule): Evidence {
	return {
		rule: 'rate_drift',
		version: rule.version,
		falseAlarmEvery_days: rule.falseAlarmEvery_days,
		ratioUp: rule.ratioUp,
		ratioDown: rule.ratioDown,
		minExpectedPerStep: rule.minExpectedPerStep,
		horizonWindows: rule.horizonWindows,
		prediction: rule.prediction,
		baseline_h: rule.baseline_h
	};
}

function horizonSpan(h: Sliding): { [key: string]: JsonValue } {
	return {
		fromSeq: oldest(h, H_SEQ),
		toSeq: valueAt(h, h.len - 1, H_SEQ),
		from_ms: oldest(h, H_T_MS),
		to_ms: valueAt(h, h.len - 1, H_T_MS),
		windows: h.len
	};
}

export function horizonEvidence(h: Sliding, confidence: number): { [key: string]: JsonValue } {
	let min = Infinity;
	let max = -Infinity;
	for (let i = 0; i < h.len; i++) {
		if (valueAt(h, i, H_MEASURED) === 0) continue;
		const T = valueAt(h, i, H_T_SUM);
		min = Math.min(min, T);
		max = Math.max(max, T);
	}
	const measured = h.sums[H_MEASURED];
	return {
		...horizonSpan(h),
		observed: h.sums[H_COUNT],
		expected: h.sums[H_EXPECTED],
		expectedAtNominal: h.sums[H_NOMINAL],
		/** The chart's prediction at the reference band's upper and lower edge. */
		referenceUpper: h.sums[H_UP],
		referenceLower: h.sums[H_DOWN],
		exposure_s: h.sums[H_EXPOSURE],
		ratio: { ...ratioEstimate(h.sums[H_COUNT], h.sums[H_EXPECTED], confidence) },
		ratioAtNominal: { ...ratioEstimate(h.sums[H_COUNT], h.sums[H_NOMINAL], confidence) },
		windowsMeasured: measured,
		meanT_mK: measured > 0 ? h.sums[H_T_SUM] / measured : null,
		minT_mK: finiteOrNull(min),
		maxT_mK: finiteOrNull(max)
	};
}

/**
 * Whether the measured temperature accounts for the excess: a Poisson fit of the horizon's
 * windows (temperature-attribution.ts). The horizon holds the span since the signalling
 * statistic left zero and, when the span is shorter, the windows before it; those anchor the
 * constant at the temperatures where the rate still agreed, which the span alone would leave to
 * extrapolation. Windows without a measured temperature are left out of the fit.
 */
function temperatureFit(
	h: Sliding,
	since: Span,
	p: RateProcess,
	rule: RateDriftRule,
	ctx: DetectorContext<'rate_drift'>
): TemperatureAttribution {
	const model = compileRates(ctx.run)[p];
	const windows = [];
	for (let i = 0; i < h.len; i++) {
		const measured = valueAt(h, i, H_MEASURED) === 1;
		windows.push({
			count: valueAt(h, i, H_COUNT),
			expectedNominal: valueAt(h, i, H_NOMINAL),
			x: measured && model ? 1 / noiseFactor(model.mode_GHz, valueAt(h, i, H_T_SUM)) : NaN,
			inSpan: valueAt(h, i, H_SEQ) >= since.fromSeq
		});
	}
	return attributeToTemperature({
		windows,
		x_nominal: model ? 1 / noiseFactor(model.mode_GHz, model.nominal_mK) : 0,
		modelSlope: model?.A_scaled ?? 0,
		chartLogExcess: Math.log(since.count / chartExpected(rule, since)),
		chartFollowsTemperature: rule.prediction === 'temperature',
		confidence: rule.confidence
	});
}

/**
 * The evidence of an opening (or a reversal), with the temperature fit over the span since the
 * signalling statistic last left zero (the windows the chart's evidence comes from).
 */
export function driftEvidence(
	ps: ProcessState,
	p: RateProcess,
	side: 'up' | 'down',
	d: CusumDesign,
	ctx: DetectorContext<'rate_drift'>
): Evidence {
	const { rule, run } = ctx;
	const h = ps.horizon!;
	const since = (side === 'up' ? ps.up : ps.down).since!;
	const vsT = ratioEstimate(since.count, since.expected, rule.confidence);
	const vsN = ratioEstimate(since.count, since.expectedNominal, rule.confidence);
	const measured = since.measured > 0;
	const nominal_mK = run.nominal_mK ?? run.rateModels?.[p]?.nominal_mK ?? 0;
	const meanT_mK = measured ? since.T_sum / since.measured : null;
	const fit = temperatureFit(h, since, p, rule, ctx);
	const explainedByTemperature = fit.explainedByTemperature;
	return {
		...ruleEvidence(rule),
		process: p,
		direction: side,
		designRatio: side === 'up' ? rule.ratioUp : rule.ratioDown,
		statistic: side === 'up' ? ps.up.S : ps.down.S,
		decisionInterval: side === 'up' ? d.hUp : d.hDown,
		design: { ...d },
		steps: ps.steps,
		reference: referenceEvidence(ps, p, since, rule, ctx),
		sinceChange: {
			fromSeq: since.fromSeq,
			toSeq: since.toSeq,
			from_ms: since.from_ms,
			to_ms: since.to_ms,
			windows: since.windows,
			observed: since.count,
			expected: since.expected,
			expectedAtNominal: since.expectedNominal,
			windowsMeasured: since.measured,
			meanT_mK
		},
		ratio: { ...vsT },
		ratioAtNominal: { ...vsN },
		horizon: horizonEvidence(h, rule.confidence),
		nominal_mK,
		temperatureMeasured: measured,
		explainedByTemperature,
		temperatureFit: { ...fit },
		temperatureShare: fit.temperatureShare,
		temperatureShareInterval: fit.temperatureShareInterval,
		residualRatio: fit.residualRatio,
		residualInterval: fit.residualInterval,
		explanation: explain(p, vsT, vsN, meanT_mK, nominal_mK, fit, rule, since.windows),
		rateModel: rateModelEvidence(run, p)
	};
}

export const range = (r: RatioEstimate) => `${fmt(r.estimate ?? NaN)} (${fmt(r.lower ?? 0)}–${r.upper === null ? '∞' : fmt(r.upper)})`;

const interval = (i: [number, number] | null) => (i ? `${fmt(i[0])}–${fmt(i[1])}` : 'unbounded');

function explain(
	p: RateProcess,
	vsT: RatioEstimate,
	vsN: RatioEstimate,
	meanT_mK: number | null,
	nominal_mK: number,
	fit: TemperatureAttribution,
	rule: RateDriftRule,
	windows: number
): string {
	const what = p === 'switching' ? 'switching rate' : 'escape rate';
	const nominal = `${fmt(nominal_mK)} mK`;
	const over = `over the ${windows} windows since the change began`;
	const r = rule.prediction === 'temperature' ? vsT : vsN;
	if (meanT_mK === null || fit.reason === 'no_temperature') {
		return `No mixing-chamber temperature in these windows: the prediction used the nominal ${nominal}, so a temperature change cannot be ruled out. The ${what} is ${range(vsT)} × that prediction ${over}.`;
	}
	const meanT = `${fmt(meanT_mK)} mK`;
	const seen = `${over[0].toUpperCase()}${over.slice(1)} the ${what} is ${range(r)} × the chart's prediction (mean temperature ${meanT}, nominal ${nominal}).`;
	const share =
		fit.temperatureShare === null
			? ''
			: `the temperature term carries ${fmt(100 * fit.temperatureShare)} % (${interval(fit.temperatureShareInterval && [100 * fit.temperatureShareInterval[0], 100 * fit.temperatureShareInterval[1]])} %) of the log excess over the chart's prediction`;
	const residual =
		fit.residualRatio === null
			? ''
			: `a constant factor of ${fmt(fit.residualRatio)} (${interval(fit.residualInterval)}) remains at the nominal temperature`;
	const fitted = `a Poisson fit of the ${fit.windowsFitted} windows with a measured temperature on 1/(2n̄+1)`;
	switch (fit.reason) {
		case 'temperature_carries_it':
			return `Explained by temperature: ${seen} In ${fitted}, ${share}, and ${residual}, consistent with 1.`;
		case 'residual_constant':
			return `Unexplained by temperature: ${seen} In ${fitted}, ${residual}, which the temperature does not account for — detuning or bias drift, or a changed operating point${share ? `; ${share}` : ''}.`;
		case 'temperature_share_small':
			return `Unexplained by temperature: ${seen} In ${fitted}, ${share} — too little to account for it.`;
		case 'temperature_at_nominal':
			return fit.explainedByTemperature === false
				? `Unexplained by temperature: ${seen} The temperature stayed at the nominal point, so it cannot account for the rate factor of ${fmt(fit.residualRatio!)} (${interval(fit.residualInterval)}) — detuning or bias drift, or a changed operating point.`
				: `Cannot tell whether the temperature explains it: ${seen} The temperature stayed at the nominal point and the rate there is not significantly off (${fmt(fit.residualRatio!)}, ${interval(fit.residualInterval)}): the chart accumulated several smaller excesses.`;
		case 'changed_at_steady_temperature':
			return `Unexplained by temperature: ${seen} The temperature did not move, yet the rate stepped by ${fmt(fit.residualRatio!)} (${interval(fit.residualInterval)}) against the windows before, where it agreed with the prediction — detuning or bias drift, or a changed operating point.`;
		case 'no_counts':
		case 'no_fit':
			return `Cannot tell whether the temperature explains it: ${seen} Too few switches in the windows with a measured temperature for a fit on 1/(2n̄+1).`;
		case 'temperature_steady':
			return `Cannot tell whether the temperature explains it: ${seen} The temperature barely varied away from the nominal point, so a temperature law the model has wrong and a constant factor (detuning or bias drift) fit equally well.`;
		default:
			return `Cannot tell whether the temperature explains it: ${seen} In ${fitted}${share ? `, ${share}` : ''}${residual ? `, and ${residual}` : ''}: the intervals are too wide to decide.`;
	}
}

export function summaryOf(p: RateProcess, side: 'up' | 'down', ev: Evidence): string {
	const what = p === 'switching' ? 'Switching rate' : 'Escape rate';
	const r = ev.ratio as unknown as RatioEstimate;
	const windows = (ev.sinceChange as { windows: number }).windows;
	const dir = side === 'up' ? 'above' : 'below';
	const why = !ev.temperatureMeasured
		? 'fridge temperature not measured'
		: ev.explainedByTemperature === true
			? 'explained by the fridge temperature'
			: ev.explainedByTemperature === false
				? 'not explained by the fridge temperature'
				: 'cannot tell whether the fridge temperature explains it';
	return `${what} drifted ${dir} the prediction: ${range(r)} × over the last ${windows} windows (CUSUM ${fmt(Number(ev.statistic))} ≥ h = ${fmt(Number(ev.decisionInterval))}; ${why})`;
}
