// rate_drift: a two-sided Poisson CUSUM (Lucas 1985) on the ratio of observed to predicted
// switching (or escape) counts: it finds a lasting change of the rate by a factor ratioUp or
// ratioDown long before a single window or horizon would show it as a burst.
//
// Each step is one window, or several pooled until their prediction reaches minExpectedPerStep;
// its h is designed at its own predicted count (cusum-design.ts), so the chart keeps to the
// false-alarm budget as the rate moves. By default the prediction follows each window's fridge
// temperature, so a warmer fridge alone does not open the chart: what opens it is unexplained by
// temperature (detuning or bias drift, a changed operating point). With prediction 'nominal' the
// chart compares with the rate at the nominal temperature, opens on temperature excursions too,
// and the evidence then says whether the temperature explains what it saw.
//
// The evidence gives the observed/predicted ratio with its exact interval (Garwood 1936 limits on
// the observed count, divided by the predicted count, taken as known) against both predictions,
// over the span since the signalling statistic last left zero (the CUSUM's own estimate of when
// the change began, and the windows its evidence comes from), and again over the last
// horizonWindows windows, with the temperatures seen.
//
// While open the signalling statistic is held at most at h, so that it returns to zero a bounded
// time after the rate does. The condition clears when that statistic is back at zero and the
// ratio's interval over the horizon contains 1 again. Windows with zero exposure are skipped.
import { z } from 'zod';
import type { Detector, DetectorContext } from './detector';
import type { Evidence, JsonValue, Signal } from './events';
import type { ProcessExpectation, RateProcess } from './expected';
import type { Frame } from '../protocol/frame';
import { poissonCusumStep } from '../stats/cusum';
import { poissonInterval } from '../stats/poisson';
import { cusumDesignSchema, designAt, designFor, designKey, MAX_WINDOWS_PER_STEP, type CusumDesign } from './cusum-design';
import { createSliding, oldest, pushRow, slidingSchema, valueAt, type Sliding } from './sliding';
import { finiteOrNull, fmt, rateModelEvidence } from './rate-evidence';
import type { RateDriftRule } from './rules';
import { compileRates } from './expected';
import { noiseFactor } from '../physics/occupation';
import { attributeToTemperature, type TemperatureAttribution } from './temperature-attribution';

// Horizon columns; the first six are summed.
const H_COUNT = 0;
const H_EXPECTED = 1;
const H_NOMINAL = 2;
const H_T_SUM = 3;
const H_MEASURED = 4;
const H_EXPOSURE = 5;
const H_SEQ = 6;
const H_T_MS = 7;

const spanSchema = z.object({
	count: z.number().int().min(0),
	/** Predicted at each window's temperature. */
	expected: z.number(),
	/** Predicted at the nominal temperature. */
	expectedNominal: z.number(),
	/** Sum of measured temperatures, and the windows that had one. */
	T_sum: z.number(),
	measured: z.number().int().min(0),
	windows: z.number().int().min(0),
	fromSeq: z.number().int(),
	from_ms: z.number(),
	toSeq: z.number().int(),
	to_ms: z.number()
});
type Span = z.infer<typeof spanSchema>;

const sideSchema = z.object({
	/** The CUSUM statistic, ≥ 0. */
	S: z.number().min(0),
	/** Windows since the statistic last was zero; null while it is zero. */
	since: spanSchema.nullable()
});
type Side = z.infer<typeof sideSchema>;

const processStateSchema = z.object({
	up: sideSchema,
	down: sideSchema,
	/** Windows pooled into the step being built. */
	block: spanSchema.nullable(),
	horizon: slidingSchema.nullable(),
	/** The side that opened the condition, while open. */
	openSide: z.enum(['up', 'down']).nullable(),
	steps: z.number().int().min(0)
});
type ProcessState = z.infer<typeof processStateSchema>;

const rateDriftStateSchema = z.object({
	/** Grid designs used so far, by band, windows per step and window length, so that a restored engine never recomputes them differently. */
	designs: z.record(z.string(), cusumDesignSchema),
	switching: processStateSchema,
	escape: processStateSchema
});
export type RateDriftState = z.infer<typeof rateDriftStateSchema>;

const freshSide = (): Side => ({ S: 0, since: null });
const freshProcess = (): ProcessState => ({ up: freshSide(), down: freshSide(), block: null, horizon: null, openSide: null, steps: 0 });

function extend(span: Span | null, frame: Frame, e: ProcessExpectation, T: number | null): Span {
	const s = span ?? { count: 0, expected: 0, expectedNominal: 0, T_sum: 0, measured: 0, windows: 0, fromSeq: frame.seq, from_ms: frame.t, toSeq: frame.seq, to_ms: frame.t };
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
const chartExpected = (rule: RateDriftRule, span: Span) => (rule.prediction === 'temperature' ? span.expected : span.expectedNominal);

function join(a: Span | null, b: Span): Span {
	if (!a) return { ...b };
	return {
		count: a.count + b.count,
		expected: a.expected + b.expected,
		expectedNominal: a.expectedNominal + b.expectedNominal,
		T_sum: a.T_sum + b.T_sum,
		measured: a.measured + b.measured,
		windows: a.windows + b.windows,
		fromSeq: a.fromSeq,
		from_ms: a.from_ms,
		toSeq: b.toSeq,
		to_ms: b.to_ms
	};
}

export type RatioEstimate = { estimate: number | null; lower: number | null; upper: number | null; confidence: number; significant: boolean };

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

function designInputs(rule: RateDriftRule, window_s: number) {
	return {
		ratioUp: rule.ratioUp,
		ratioDown: rule.ratioDown,
		minExpectedPerStep: rule.minExpectedPerStep,
		falseAlarmEvery_days: rule.falseAlarmEvery_days,
		window_s
	};
}

function ruleEvidence(rule: RateDriftRule): Evidence {
	return {
		rule: 'rate_drift',
		version: rule.version,
		falseAlarmEvery_days: rule.falseAlarmEvery_days,
		ratioUp: rule.ratioUp,
		ratioDown: rule.ratioDown,
		minExpectedPerStep: rule.minExpectedPerStep,
		horizonWindows: rule.horizonWindows,
		prediction: rule.prediction
	};
}

export const rateDrift: Detector<'rate_drift', RateDriftState> = {
	kind: 'rate_drift',
	stateSchema: rateDriftStateSchema,

	init: () => ({ designs: {}, switching: freshProcess(), escape: freshProcess() }),

	onFrame(state, frame, ctx): Signal[] {
		const { rule, expected } = ctx;
		const signals: Signal[] = [];
		for (const p of ['switching', 'escape'] as const) {
			const watched = rule.processes.includes(p);
			if (!watched) {
				if (ctx.isOpen(p)) {
					Object.assign(state[p], freshProcess());
					signals.push({
						type: 'clear',
						key: p,
						at_ms: frame.t,
						seq: frame.seq,
						summary: `The rule no longer watches the ${p} rate`,
						evidence: { ...ruleEvidence(rule), process: p, reason: 'process_not_watched' }
					});
				}
				continue;
			}
			const e = expected?.[p];
			if (!e || !(e.exposure_s > 0)) continue;
			const signal = onWindow(state, state[p], p, frame, e, ctx);
			if (signal) signals.push(signal);
		}
		return signals;
	},

	onRuleChange(state, previous, next) {
		const redesign =
			previous.ratioUp !== next.ratioUp ||
			previous.ratioDown !== next.ratioDown ||
			previous.minExpectedPerStep !== next.minExpectedPerStep ||
			previous.falseAlarmEvery_days !== next.falseAlarmEvery_days ||
			previous.prediction !== next.prediction;
		for (const p of ['switching', 'escape'] as const) {
			const ps = state[p];
			if (redesign) {
				// The statistics were accumulated against other ratios or another prediction.
				ps.up = freshSide();
				ps.down = freshSide();
				ps.block = null;
			}
			if (previous.horizonWindows !== next.horizonWindows) ps.horizon = null;
		}
		if (redesign) state.designs = {};
	},

	onRunChange(state, at_ms, ctx): Signal[] {
		const signals: Signal[] = [];
		for (const p of ['switching', 'escape'] as const) {
			const openSide = state[p].openSide;
			Object.assign(state[p], freshProcess());
			if (openSide && ctx.isOpen(p)) {
				// Evidence gathered against the old model cannot close against the new one.
				signals.push({
					type: 'clear',
					key: p,
					at_ms,
					summary: `The ${p} rate model changed; the chart starts again against the new prediction`,
					evidence: { ...ruleEvidence(ctx.rule), process: p, reason: 'rate_model_changed' }
				});
			}
		}
		return signals;
	}
};

function onWindow(
	state: RateDriftState,
	ps: ProcessState,
	p: RateProcess,
	frame: Frame,
	e: ProcessExpectation,
	ctx: DetectorContext<'rate_drift'>
): Signal | null {
	const { rule } = ctx;
	const T = ctx.expected!;
	// The engine's open set is the truth (an opening of a disabled rule was dropped).
	if (!ctx.isOpen(p)) ps.openSide = null;
	else if (ps.openSide === null) ps.openSide = ps.up.S >= ps.down.S ? 'up' : 'down';
	if (!ps.horizon || ps.horizon.size !== rule.horizonWindows) ps.horizon = createSliding(rule.horizonWindows, 8, 6);
	pushRow(ps.horizon, [e.count, e.expected, e.expectedNominal, T.measured ? T.T_mK : 0, T.measured ? 1 : 0, e.exposure_s, frame.seq, frame.t]);

	ps.block = extend(ps.block, frame, e, T.measured ? T.T_mK : null);
	let signal: Signal | null = null;
	const block = ps.block;
	if (chartExpected(rule, block) >= rule.minExpectedPerStep) {
		ps.block = null;
		signal = step(state, ps, p, block, frame, ctx);
	} else if (block.windows >= MAX_WINDOWS_PER_STEP) {
		ps.block = null; // a rate this slow fills no step: the burst test still sees any excess
	}
	if (signal) return signal;
	return maybeClear(ps, p, frame, ctx);
}

/** h at the step's own predicted count, interpolated between grid designs; the budget is counted in windows of the step's length (window_s may change mid-run). */
function designOf(state: RateDriftState, rule: RateDriftRule, block: Span, window_s: number): CusumDesign {
	const inputs = designInputs(rule, window_s);
	return designAt(chartExpected(rule, block), block.windows, inputs, (band) => {
		const key = designKey(band, block.windows, window_s);
		return (state.designs[key] ??= designFor(band, block.windows, inputs));
	});
}

function advance(side: Side, S: number, block: Span): void {
	side.S = S;
	side.since = S === 0 ? null : join(side.since, block);
}

function step(state: RateDriftState, ps: ProcessState, p: RateProcess, block: Span, frame: Frame, ctx: DetectorContext<'rate_drift'>): Signal | null {
	const { rule } = ctx;
	const d = designOf(state, rule, block, frame.window_s);
	ps.steps += 1;
	const mu = chartExpected(rule, block);
	advance(ps.up, poissonCusumStep(ps.up.S, block.count, mu, rule.ratioUp), block);
	advance(ps.down, poissonCusumStep(ps.down.S, block.count, mu, rule.ratioDown), block);
	const overUp = ps.up.S >= d.hUp;
	const overDown = ps.down.S >= d.hDown;

	if (ps.openSide === null) {
		if (!overUp && !overDown) return null;
		const side = overUp && (!overDown || ps.up.S / d.hUp >= ps.down.S / d.hDown) ? 'up' : 'down';
		const evidence = driftEvidence(ps, p, side, d, ctx);
		ps.openSide = side;
		hold(ps, d);
		return { type: 'open', key: p, severity: 'warning', at_ms: frame.t, seq: frame.seq, summary: summaryOf(p, side, evidence), evidence };
	}
	// Open: a signal of the other side means the rate moved past the prediction the other way.
	const other = ps.openSide === 'up' ? 'down' : 'up';
	const otherOver = other === 'up' ? overUp : overDown;
	if (otherOver) {
		const evidence = driftEvidence(ps, p, other, d, ctx);
		ps.openSide = other;
		(ps.openSide === 'up' ? ps.down : ps.up).S = 0;
		(ps.openSide === 'up' ? ps.down : ps.up).since = null;
		hold(ps, d);
		return { type: 'update', key: p, at_ms: frame.t, seq: frame.seq, evidence: { ...evidence, reversed: true } };
	}
	hold(ps, d);
	return null;
}

/** While open, the signalling statistic is held at most at h (see the file's comment). */
function hold(ps: ProcessState, d: CusumDesign): void {
	if (ps.openSide === 'up') ps.up.S = Math.min(ps.up.S, d.hUp);
	if (ps.openSide === 'down') ps.down.S = Math.min(ps.down.S, d.hDown);
}

function horizonSpan(h: Sliding): { [key: string]: JsonValue } {
	return { fromSeq: oldest(h, H_SEQ), toSeq: valueAt(h, h.len - 1, H_SEQ), from_ms: oldest(h, H_T_MS), to_ms: valueAt(h, h.len - 1, H_T_MS), windows: h.len };
}

function horizonEvidence(h: Sliding, confidence: number): { [key: string]: JsonValue } {
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
function temperatureFit(h: Sliding, since: Span, p: RateProcess, rule: RateDriftRule, ctx: DetectorContext<'rate_drift'>): TemperatureAttribution {
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
function driftEvidence(ps: ProcessState, p: RateProcess, side: 'up' | 'down', d: CusumDesign, ctx: DetectorContext<'rate_drift'>): Evidence {
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

const range = (r: RatioEstimate) => `${fmt(r.estimate ?? NaN)} (${fmt(r.lower ?? 0)}–${r.upper === null ? '∞' : fmt(r.upper)})`;

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
	const share = fit.temperatureShare === null ? '' : `the temperature term carries ${fmt(100 * fit.temperatureShare)} % (${interval(fit.temperatureShareInterval && [100 * fit.temperatureShareInterval[0], 100 * fit.temperatureShareInterval[1]])} %) of the log excess over the chart's prediction`;
	const residual = fit.residualRatio === null ? '' : `a constant factor of ${fmt(fit.residualRatio)} (${interval(fit.residualInterval)}) remains at the nominal temperature`;
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

function summaryOf(p: RateProcess, side: 'up' | 'down', ev: Evidence): string {
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

function maybeClear(ps: ProcessState, p: RateProcess, frame: Frame, ctx: DetectorContext<'rate_drift'>): Signal | null {
	if (ps.openSide === null) return null;
	const side = ps.openSide === 'up' ? ps.up : ps.down;
	if (side.S > 0) return null;
	const { rule } = ctx;
	const h = ps.horizon!;
	const chart = rule.prediction === 'temperature' ? H_EXPECTED : H_NOMINAL;
	const r = ratioEstimate(h.sums[H_COUNT], h.sums[chart], rule.confidence);
	if (r.significant) return null;
	const openSide = ps.openSide;
	ps.openSide = null;
	if (!ctx.isOpen(p)) return null;
	return {
		type: 'clear',
		key: p,
		at_ms: frame.t,
		seq: frame.seq,
		summary: `${p === 'switching' ? 'Switching' : 'Escape'} rate back at the prediction: ratio ${range(r)} over the last ${h.len} windows, CUSUM back at 0`,
		evidence: {
			...ruleEvidence(rule),
			process: p,
			direction: openSide,
			statistic: 0,
			horizon: horizonEvidence(h, rule.confidence)
		}
	};
}
