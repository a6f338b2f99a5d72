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
// Model uncertainty (model-band.ts): no rate model is exact, so each side of the chart compares
// with the edge of the band the true rate may lie in, never with the point prediction: the upper
// chart with μ·e^hi, the lower with μ·e^lo, where [lo, hi] bounds ln(true/predicted). A rate
// anywhere inside [lo, hi] then runs each side at most at its designed false-alarm rate. Over the
// run's first baseline_h hours [lo, hi] is the model's own band, ±2σ of ln W from W0_sigma, A_sigma
// and covariance at the window's temperature. After that the run's own baseline takes over: the
// ratio observed/predicted over those hours with its exact 2σ (95.45 %) Garwood interval, intersected
// with the model's band at their mean x = s/(2n̄+1); at another temperature the interval widens by
// 2·A_sigma·|x − x_baseline|, since only the error of A changes ln(true/predicted) with
// temperature. Drift is thus judged against what this run did at the start, to within what its
// first hours could tell. If the baseline's interval lies wholly outside the model's band, this
// operating point does not match its rate model: that is its own finding (key '<process>:model',
// severity info, open until the model changes), not a page, and the chart then follows the
// baseline alone.
//
// One budget per rule: the processes the rule watches (and that have a model) share its budget
// equally (Bonferroni), so watching switching and escape spends no more than watching one.
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
import { activationX, BAND_SIGMAS, clampLnReference, lnBandHalfWidth, modelUncertainty, type ModelUncertainty } from './model-band';

// Horizon columns; the first six are summed.
const H_COUNT = 0;
const H_EXPECTED = 1;
const H_NOMINAL = 2;
const H_T_SUM = 3;
const H_MEASURED = 4;
const H_EXPOSURE = 5;
/** Chart prediction at the upper and lower edge of the reference band. */
const H_UP = 6;
const H_DOWN = 7;
const H_SEQ = 8;
const H_T_MS = 9;
const H_WIDTH = 10;
const H_SUMMED = 8;
/** Two-sided confidence of the baseline's interval: ±2σ of a normal. */
const BASELINE_CONFIDENCE = 0.9544997361036416;

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
	/** Chart prediction at the band's upper and lower edge (absent in snapshots from before the band: the prediction itself). */
	expectedUp: z.number().optional(),
	expectedDown: z.number().optional(),
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

const baselineSchema = z.object({
	/** 'learning': the chart compares with the model's band; 'set': with the run's own baseline. */
	phase: z.enum(['learning', 'set']),
	/** Seconds of windows with exposure learned from. */
	learned_s: z.number().min(0),
	count: z.number().int().min(0),
	/** Chart prediction summed over the learning windows, and Σ prediction·x for their mean x. */
	expected: z.number().min(0),
	xWeighted: z.number(),
	fromSeq: z.number().int().nullable(),
	toSeq: z.number().int().nullable(),
	/** Once set: mean x, ln of the observed/predicted estimate, and the reference interval of ln(true/predicted) at x. */
	x: z.number().nullable(),
	lnEstimate: z.number().nullable(),
	lnLo: z.number().nullable(),
	lnHi: z.number().nullable(),
	/** The baseline's interval lies wholly outside the model's band. */
	mismatch: z.boolean()
});
type Baseline = z.infer<typeof baselineSchema>;

const processStateSchema = z.object({
	/** Absent in snapshots from before the baseline: they start learning. */
	baseline: baselineSchema.optional(),
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
const freshBaseline = (): Baseline => ({
	phase: 'learning',
	learned_s: 0,
	count: 0,
	expected: 0,
	xWeighted: 0,
	fromSeq: null,
	toSeq: null,
	x: null,
	lnEstimate: null,
	lnLo: null,
	lnHi: null,
	mismatch: false
});
const freshProcess = (): ProcessState => ({ baseline: freshBaseline(), up: freshSide(), down: freshSide(), block: null, horizon: null, openSide: null, steps: 0 });

/** The key of the "operating point does not match its rate model" finding. */
export const mismatchKey = (p: RateProcess) => `${p}:model`;

function extend(span: Span | null, frame: Frame, e: ProcessExpectation, T: number | null, up: number, down: number): Span {
	const s = span ?? { count: 0, expected: 0, expectedNominal: 0, T_sum: 0, measured: 0, windows: 0, expectedUp: 0, expectedDown: 0, fromSeq: frame.seq, from_ms: frame.t, toSeq: frame.seq, to_ms: frame.t };
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
const chartExpected = (rule: RateDriftRule, span: Span) => (rule.prediction === 'temperature' ? span.expected : span.expectedNominal);
const upperExpected = (rule: RateDriftRule, span: Span) => span.expectedUp ?? chartExpected(rule, span);
const lowerExpected = (rule: RateDriftRule, span: Span) => span.expectedDown ?? chartExpected(rule, span);

// A span from an old snapshot lacks the band sums; the nominal-or-temperature choice is not known
// here, so the temperature prediction stands in (the pre-band chart's default).
const upOrChart = (s: Span) => s.expectedUp ?? s.expected;
const downOrChart = (s: Span) => s.expectedDown ?? s.expected;

function join(a: Span | null, b: Span): Span {
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

/** Processes that share the rule's budget: those it watches that have a rate model (at least 1). */
export function budgetShare(rule: RateDriftRule, run: DetectorContext<'rate_drift'>['run']): number {
	return Math.max(1, rule.processes.filter((p) => run.rateModels?.[p]).length);
}

function designInputs(rule: RateDriftRule, window_s: number, share: number) {
	return {
		ratioUp: rule.ratioUp,
		ratioDown: rule.ratioDown,
		minExpectedPerStep: rule.minExpectedPerStep,
		// Bonferroni across the processes: each chart gets share × the rule's run length.
		falseAlarmEvery_days: rule.falseAlarmEvery_days * share,
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
		prediction: rule.prediction,
		baseline_h: rule.baseline_h
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
				if (ctx.isOpen(mismatchKey(p))) signals.push(clearMismatch(p, frame.t, ctx, 'process_not_watched', frame.seq));
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
			signals.push(...onWindow(state, state[p], p, frame, e, ctx));
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
			// A baseline learned against the other prediction does not apply to this one.
			if (previous.prediction !== next.prediction) ps.baseline = freshBaseline();
			// Turning the baseline off while learning drops what was learned: a later one starts afresh.
			if (previous.baseline_h !== next.baseline_h && ps.baseline?.phase === 'learning' && next.baseline_h === 0) ps.baseline = freshBaseline();
			if (previous.horizonWindows !== next.horizonWindows) ps.horizon = null;
		}
		if (redesign) state.designs = {};
	},

	onRunChange(state, at_ms, ctx): Signal[] {
		const signals: Signal[] = [];
		for (const p of ['switching', 'escape'] as const) {
			const openSide = state[p].openSide;
			Object.assign(state[p], freshProcess());
			// The new model's band is another: the baseline is learned again against it.
			if (ctx.isOpen(mismatchKey(p))) signals.push(clearMismatch(p, at_ms, ctx, 'rate_model_changed'));
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
): Signal[] {
	const { rule } = ctx;
	const T = ctx.expected!;
	const signals: Signal[] = [];
	// The engine's open set is the truth (an opening of a disabled rule was dropped).
	if (!ctx.isOpen(p)) ps.openSide = null;
	else if (ps.openSide === null) ps.openSide = ps.up.S >= ps.down.S ? 'up' : 'down';
	const baseline = (ps.baseline ??= freshBaseline());
	const u = modelUncertainty(ctx.run, p)!;
	const x = activationX(u, rule.prediction === 'temperature' ? T.T_mK : u.nominal_mK);
	const chart = rule.prediction === 'temperature' ? e.expected : e.expectedNominal;
	const [lo, hi] = referenceInterval(baseline, u, x);
	const up = chart * Math.exp(hi);
	const down = chart * Math.exp(lo);

	if (!ps.horizon || ps.horizon.size !== rule.horizonWindows || ps.horizon.width !== H_WIDTH) ps.horizon = createSliding(rule.horizonWindows, H_WIDTH, H_SUMMED);
	pushRow(ps.horizon, [e.count, e.expected, e.expectedNominal, T.measured ? T.T_mK : 0, T.measured ? 1 : 0, e.exposure_s, up, down, frame.seq, frame.t]);

	ps.block = extend(ps.block, frame, e, T.measured ? T.T_mK : null, up, down);
	const block = ps.block;
	// Pooled until the smaller of the two sides' predictions fills a step.
	if (Math.min(chartExpected(rule, block), lowerExpected(rule, block)) >= rule.minExpectedPerStep) {
		ps.block = null;
		const signal = step(state, ps, p, block, frame, ctx);
		if (signal) signals.push(signal);
	} else if (block.windows >= MAX_WINDOWS_PER_STEP) {
		ps.block = null; // a rate this slow fills no step: the burst test still sees any excess
	}

	if (baseline.phase === 'learning' && rule.baseline_h > 0) {
		const newMismatch = learn(baseline, u, frame, e.count, chart, x, rule.baseline_h);
		if (newMismatch && !ctx.isOpen(mismatchKey(p))) signals.push(mismatchSignal(p, baseline, u, frame, ctx));
		if ((baseline.phase as Baseline['phase']) === 'set' && ps.openSide === null) {
			// From here the chart compares with the baseline: what it summed against the band is dropped.
			ps.up = freshSide();
			ps.down = freshSide();
		}
	}
	if (signals.some((sg) => sg.key === p)) return signals;
	const clear = maybeClear(ps, p, frame, ctx);
	if (clear) signals.push(clear);
	return signals;
}

/** [lo, hi] bounding ln(true/predicted) at x: the model's band while learning, then the baseline's (file comment). */
function referenceInterval(b: Baseline, u: ModelUncertainty, x: number): [number, number] {
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
function learn(b: Baseline, u: ModelUncertainty, frame: Frame, count: number, chart: number, x: number, baseline_h: number): boolean {
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
function referenceEvidence(ps: ProcessState, p: RateProcess, since: Span, rule: RateDriftRule, ctx: DetectorContext<'rate_drift'>): { [key: string]: JsonValue } {
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

function baselineEvidence(b: Baseline, u: ModelUncertainty): { [key: string]: JsonValue } {
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

function uncertaintyEvidence(u: ModelUncertainty): { [key: string]: JsonValue } {
	return { W0_sigma: u.W0_sigma, A_sigma: u.A_sigma, covariance: u.covariance, stated: u.stated, bandSigmas: BAND_SIGMAS };
}

function mismatchSignal(
	p: RateProcess,
	b: Baseline,
	u: ModelUncertainty,
	frame: Frame,
	ctx: DetectorContext<'rate_drift'>,
	early?: { summary: string; evidence: { [key: string]: JsonValue } }
): Signal {
	const what = p === 'switching' ? 'switching' : 'escape';
	const ev = baselineEvidence(b, u);
	const hours = fmt(b.learned_s / 3600);
	if (early) {
		return {
			type: 'open',
			key: mismatchKey(p),
			severity: 'info',
			at_ms: frame.t,
			seq: frame.seq,
			summary: early.summary,
			evidence: { ...ruleEvidence(ctx.rule), process: p, found: 'chart', ...early.evidence, baseline: ev, uncertainty: uncertaintyEvidence(u), rateModel: rateModelEvidence(ctx.run, p) }
		};
	}
	return {
		type: 'open',
		key: mismatchKey(p),
		severity: 'info',
		at_ms: frame.t,
		seq: frame.seq,
		summary: `This operating point does not match its ${what} rate model: over the first ${hours} h the rate was ${fmt(Number(ev.ratio))} × the prediction (${fmt(Number(ev.ratioLower))}–${fmt(Number(ev.ratioUpper))}), outside the model's ${BAND_SIGMAS}σ band ${fmt(Number(ev.modelBandLower))}–${fmt(Number(ev.modelBandUpper))}; drift is judged against this run's own rate from now on`,
		evidence: { ...ruleEvidence(ctx.rule), process: p, found: 'baseline', baseline: ev, uncertainty: uncertaintyEvidence(u), rateModel: rateModelEvidence(ctx.run, p) }
	};
}

function clearMismatch(p: RateProcess, at_ms: number, ctx: DetectorContext<'rate_drift'>, reason: string, seq?: number): Signal {
	return {
		type: 'clear',
		key: mismatchKey(p),
		at_ms,
		...(seq === undefined ? {} : { seq }),
		summary: reason === 'rate_model_changed' ? `The ${p} rate model changed; its match is judged again over the next baseline` : `The rule no longer watches the ${p} rate`,
		evidence: { ...ruleEvidence(ctx.rule), process: p, reason }
	};
}

/**
 * h at one side's own reference count, interpolated between grid designs (cached in the state);
 * the budget is counted in windows of the step's length (window_s may change mid-run) and shared
 * between the processes the rule watches.
 */
function designSide(state: RateDriftState, rule: RateDriftRule, muStep: number, windowsPerStep: number, share: number, window_s: number): CusumDesign {
	const inputs = designInputs(rule, window_s, share);
	return designAt(muStep, windowsPerStep, inputs, (band) => {
		const key = `${designKey(band, windowsPerStep, window_s)}:${share}`;
		return (state.designs[key] ??= designFor(band, windowsPerStep, inputs));
	});
}

/** Each side's h comes from the band of its own reference count. */
function designOf(state: RateDriftState, rule: RateDriftRule, block: Span, run: DetectorContext<'rate_drift'>['run'], window_s: number): CusumDesign {
	const share = budgetShare(rule, run);
	const up = designSide(state, rule, upperExpected(rule, block), block.windows, share, window_s);
	const down = designSide(state, rule, lowerExpected(rule, block), block.windows, share, window_s);
	return { ...up, hDown: down.hDown };
}

function advance(side: Side, S: number, block: Span): void {
	side.S = S;
	side.since = S === 0 ? null : join(side.since, block);
}

function step(state: RateDriftState, ps: ProcessState, p: RateProcess, block: Span, frame: Frame, ctx: DetectorContext<'rate_drift'>): Signal | null {
	const { rule } = ctx;
	const d = designOf(state, rule, block, ctx.run, frame.window_s);
	ps.steps += 1;
	advance(ps.up, poissonCusumStep(ps.up.S, block.count, upperExpected(rule, block), rule.ratioUp), block);
	advance(ps.down, poissonCusumStep(ps.down.S, block.count, lowerExpected(rule, block), rule.ratioDown), block);
	const overUp = ps.up.S >= d.hUp;
	const overDown = ps.down.S >= d.hDown;

	const baseline = ps.baseline!;
	if (ps.openSide === null && baseline.phase === 'learning' && rule.baseline_h > 0) {
		// Still learning: a rate beyond the model's band is the model's mismatch, not a page.
		if (!overUp && !overDown) return null;
		const side = overUp && (!overDown || ps.up.S / d.hUp >= ps.down.S / d.hDown) ? 'up' : 'down';
		const since = (side === 'up' ? ps.up : ps.down).since!;
		const statistic = side === 'up' ? ps.up.S : ps.down.S;
		ps.up = freshSide();
		ps.down = freshSide();
		if (baseline.mismatch) return null;
		baseline.mismatch = true;
		const r = ratioEstimate(since.count, chartExpected(rule, since), rule.confidence);
		return mismatchSignal(p, baseline, modelUncertainty(ctx.run, p)!, frame, ctx, {
			summary: `So far this operating point does not match its ${p} rate model: the rate is ${range(r)} × the prediction over ${since.windows} windows, beyond the model's ${BAND_SIGMAS}σ band (CUSUM ${fmt(statistic)} ≥ h = ${fmt(side === 'up' ? d.hUp : d.hDown)}); the run's own baseline is still being learned`,
			evidence: { direction: side, statistic, decisionInterval: side === 'up' ? d.hUp : d.hDown, ratio: { ...r }, sinceChange: { fromSeq: since.fromSeq, toSeq: since.toSeq, windows: since.windows, observed: since.count, expected: chartExpected(rule, since) } }
		});
	}

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
	// Back when the horizon's interval meets the reference band, not the point prediction: a rate
	// inside the band would otherwise keep it "significant" for good.
	const { lower, upper } = poissonInterval(h.sums[H_COUNT], rule.confidence);
	if (lower > h.sums[H_UP] || upper < h.sums[H_DOWN]) return null;
	const openSide = ps.openSide;
	ps.openSide = null;
	if (!ctx.isOpen(p)) return null;
	return {
		type: 'clear',
		key: p,
		at_ms: frame.t,
		seq: frame.seq,
		summary: `${p === 'switching' ? 'Switching' : 'Escape'} rate back within its reference band: ratio ${range(r)} over the last ${h.len} windows, CUSUM back at 0`,
		evidence: {
			...ruleEvidence(rule),
			process: p,
			direction: openSide,
			statistic: 0,
			horizon: horizonEvidence(h, rule.confidence)
		}
	};
}
