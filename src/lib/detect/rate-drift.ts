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
//
// Here the detector and its chart steps; beside it rate-drift-state.ts (the saved state),
// rate-drift-span.ts (summed windows, ratio intervals), rate-drift-baseline.ts (the learned
// reference) and rate-drift-evidence.ts (what a finding carries and says).
import type { Frame } from '../protocol/frame';
import { poissonCusumStep } from '../stats/cusum';
import { poissonInterval } from '../stats/poisson';
import { type CusumDesign, designAt, designFor, designKey, MAX_WINDOWS_PER_STEP } from './cusum-design';
import type { Detector, DetectorContext } from './detector';
import type { JsonValue, Signal } from './events';
import type { ProcessExpectation, RateProcess } from './expected';
import { activationX, BAND_SIGMAS, type ModelUncertainty, modelUncertainty } from './model-band';
import { baselineEvidence, budgetShare, learn, referenceInterval, uncertaintyEvidence } from './rate-drift-baseline';
import { driftEvidence, horizonEvidence, range, ruleEvidence, summaryOf } from './rate-drift-evidence';
import { chartExpected, extend, join, lowerExpected, ratioEstimate, upperExpected } from './rate-drift-span';
import {
	type Baseline,
	freshBaseline,
	freshProcess,
	freshSide,
	H_COUNT,
	H_DOWN,
	H_EXPECTED,
	H_NOMINAL,
	H_SUMMED,
	H_UP,
	H_WIDTH,
	mismatchKey,
	type ProcessState,
	type RateDriftState,
	rateDriftStateSchema,
	type Side,
	type Span
} from './rate-drift-state';
import { fmt, rateModelEvidence } from './rate-evidence';
import type { RateDriftRule } from './rules';
import { createSliding, pushRow } from './sliding';

export { mismatchKey, type RateDriftState } from './rate-drift-state';
export { budgetShare } from './rate-drift-baseline';
export { ratioEstimate, type RatioEstimate } from './rate-drift-span';

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
			if (previous.baseline_h !== next.baseline_h && ps.baseline?.phase === 'learning' && next.baseline_h === 0)
				ps.baseline = freshBaseline();
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

	if (!ps.horizon || ps.horizon.size !== rule.horizonWindows || ps.horizon.width !== H_WIDTH)
		ps.horizon = createSliding(rule.horizonWindows, H_WIDTH, H_SUMMED);
	pushRow(ps.horizon, [
		e.count,
		e.expected,
		e.expectedNominal,
		T.measured ? T.T_mK : 0,
		T.measured ? 1 : 0,
		e.exposure_s,
		up,
		down,
		frame.seq,
		frame.t
	]);

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
			evidence: {
				...ruleEvidence(ctx.rule),
				process: p,
				found: 'chart',
				...early.evidence,
				baseline: ev,
				uncertainty: uncertaintyEvidence(u),
				rateModel: rateModelEvidence(ctx.run, p)
			}
		};
	}
	return {
		type: 'open',
		key: mismatchKey(p),
		severity: 'info',
		at_ms: frame.t,
		seq: frame.seq,
		summary: `This operating point does not match its ${what} rate model: over the first ${hours} h the rate was ${fmt(Number(ev.ratio))} × the prediction (${fmt(Number(ev.ratioLower))}–${fmt(Number(ev.ratioUpper))}), outside the model's ${BAND_SIGMAS}σ band ${fmt(Number(ev.modelBandLower))}–${fmt(Number(ev.modelBandUpper))}; drift is judged against this run's own rate from now on`,
		evidence: {
			...ruleEvidence(ctx.rule),
			process: p,
			found: 'baseline',
			baseline: ev,
			uncertainty: uncertaintyEvidence(u),
			rateModel: rateModelEvidence(ctx.run, p)
		}
	};
}

function clearMismatch(p: RateProcess, at_ms: number, ctx: DetectorContext<'rate_drift'>, reason: string, seq?: number): Signal {
	return {
		type: 'clear',
		key: mismatchKey(p),
		at_ms,
		...(seq === undefined ? {} : { seq }),
		summary:
			reason === 'rate_model_changed'
				? `The ${p} rate model changed; its match is judged again over the next baseline`
				: `The rule no longer watches the ${p} rate`,
		evidence: { ...ruleEvidence(ctx.rule), process: p, reason }
	};
}

/**
 * h at one side's own reference count, interpolated between grid designs (cached in the state);
 * the budget is counted in windows of the step's length (window_s may change mid-run) and shared
 * between the processes the rule watches.
 */
function designSide(
	state: RateDriftState,
	rule: RateDriftRule,
	muStep: number,
	windowsPerStep: number,
	share: number,
	window_s: number
): CusumDesign {
	const inputs = designInputs(rule, window_s, share);
	return designAt(muStep, windowsPerStep, inputs, (band) => {
		const key = `${designKey(band, windowsPerStep, window_s)}:${share}`;
		return (state.designs[key] ??= designFor(band, windowsPerStep, inputs));
	});
}

/** Each side's h comes from the band of its own reference count. */
function designOf(
	state: RateDriftState,
	rule: RateDriftRule,
	block: Span,
	run: DetectorContext<'rate_drift'>['run'],
	window_s: number
): CusumDesign {
	const share = budgetShare(rule, run);
	const up = designSide(state, rule, upperExpected(rule, block), block.windows, share, window_s);
	const down = designSide(state, rule, lowerExpected(rule, block), block.windows, share, window_s);
	return { ...up, hDown: down.hDown };
}

function advance(side: Side, S: number, block: Span): void {
	side.S = S;
	side.since = S === 0 ? null : join(side.since, block);
}

function step(
	state: RateDriftState,
	ps: ProcessState,
	p: RateProcess,
	block: Span,
	frame: Frame,
	ctx: DetectorContext<'rate_drift'>
): Signal | null {
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
			evidence: {
				direction: side,
				statistic,
				decisionInterval: side === 'up' ? d.hUp : d.hDown,
				ratio: { ...r },
				sinceChange: {
					fromSeq: since.fromSeq,
					toSeq: since.toSeq,
					windows: since.windows,
					observed: since.count,
					expected: chartExpected(rule, since)
				}
			}
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
