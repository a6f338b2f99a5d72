// switching_burst: more switches (or escapes) in one window, or in a sliding horizon of windows,
// than the predicted rate makes plausible — an exact Poisson upper tail against a level set by
// the false-alarm budget (budget.ts), never a hand-picked count.
//
// Per window and process, with μ the predicted count (rate at the window's temperature × exposure):
//   window test:  P(K ≥ k | μ) for this window's count k;
//   horizon test: the same for the sums over the last `horizonWindows` windows (a moderate
//                 excess that lasts is invisible window by window but plain over the horizon).
// Each test runs at α_window / (tests run on this window) (Bonferroni; see budget.ts). The
// incident clears after `clearWindows` consecutive windows in which every test of the process has
// p ≥ clearPValue: a far weaker level than α, so it does not flap; a burst stays inside the
// horizon for horizonWindows windows, so it clears no sooner than that after the burst.
//
// No rate model is exact, so each test compares with the upper edge of the model's band (the
// prediction × e^{2σ(ln W)} at the window's temperature, model-band.ts): a true rate anywhere in
// the band then opens at most at α. What is tested is an excess beyond what the model allows.
//
// Windows with zero exposure (dwell_s = 0, or vacuum_s = 0 for escapes) carry no rate information:
// they are not tested and not added to the horizon, and do not count as quiet. (A count with zero
// exposure is inconsistent; it never becomes NaN, it is ignored.) A predicted count that is zero
// while the exposure is not (a rate that underflows) makes any event infinitely implausible:
// p = 0, which opens. A gap in seq needs nothing special: the horizon holds the last windows that
// arrived, and their counts and exposures are summed together. Without a rate model for a
// process the detector stays idle for it.
import { z } from 'zod';
import type { Detector, DetectorContext } from './detector';
import type { Evidence, JsonValue, Signal } from './events';
import type { FrameExpectation, RateProcess } from './expected';
import { poissonThresholdForTail, poissonUpperTail } from '../stats/poisson';
import { windowAlpha } from './budget';
import { createSliding, oldest, pushRow, slidingSchema } from './sliding';
import { fmt, fmtP, rateModelEvidence } from './rate-evidence';
import type { SwitchingBurstRule } from './rules';
import type { Frame } from '../protocol/frame';
import { activationX, BAND_SIGMAS, clampLnReference, lnBandHalfWidth, modelUncertainty } from './model-band';

// Horizon columns: the first four are summed.
const COUNT = 0;
const EXPECTED = 1;
/** The prediction at the upper edge of the model's band: what is tested. */
const TESTED = 2;
const EXPOSURE = 3;
const SEQ = 4;
const T_MS = 5;
const WIDTH = 6;
const SUMMED = 4;

const processStateSchema = z.object({
	horizon: slidingSchema.nullable(),
	/** Consecutive quiet windows while open. */
	quiet: z.number().int().min(0),
	/** Smallest p-value since the condition opened. */
	worstP: z.number().nullable(),
	windowsOpen: z.number().int().min(0)
});
type ProcessState = z.infer<typeof processStateSchema>;

const switchingBurstStateSchema = z.object({ switching: processStateSchema, escape: processStateSchema });
export type SwitchingBurstState = z.infer<typeof switchingBurstStateSchema>;

const freshProcess = (): ProcessState => ({ horizon: null, quiet: 0, worstP: null, windowsOpen: 0 });

type Test = {
	process: RateProcess;
	scope: 'window' | 'horizon';
	observed: number;
	/** The model's prediction. */
	expected: number;
	/** The upper edge of its band, which the p-value is against. */
	tested: number;
	exposure_s: number;
	fromSeq: number;
	toSeq: number;
	from_ms: number;
	to_ms: number;
	windows: number;
	/** Exact when the count exceeds its expectation (or always, when asked); else ≥ 0.5 and left at 1. */
	pValue: number;
};

/**
 * P(K ≥ k | μ). When k ≤ μ it is at least 1/2 (the Poisson median is at least μ − ln 2), which
 * is all the tests need unless clearPValue exceeds 1/2; skipping it keeps replay fast.
 */
function tail(k: number, mu: number, exact: boolean): number {
	if (!exact && k <= mu) return 1;
	return poissonUpperTail(k, mu);
}

function processes(rule: SwitchingBurstRule, expected: FrameExpectation | undefined): RateProcess[] {
	if (!expected) return [];
	const list: RateProcess[] = [];
	if (expected.switching && expected.switching.exposure_s > 0) list.push('switching');
	if (rule.locked && expected.escape && expected.escape.exposure_s > 0) list.push('escape');
	return list;
}

function testEvidence(t: Test, alpha: number): { [key: string]: JsonValue } {
	return {
		process: t.process,
		scope: t.scope,
		observed: t.observed,
		expected: t.expected,
		testedAgainst: t.tested,
		exposure_s: t.exposure_s,
		// Exact here even where the decision skipped it (k ≤ μ, where it is at least 1/2).
		pValue: poissonUpperTail(t.observed, t.tested),
		alpha,
		/** Smallest count the band's upper edge would have flagged at this α. */
		thresholdCount: poissonThresholdForTail(t.tested, alpha),
		fromSeq: t.fromSeq,
		toSeq: t.toSeq,
		from_ms: t.from_ms,
		to_ms: t.to_ms,
		windows: t.windows
	};
}

function ruleEvidence(rule: SwitchingBurstRule): Evidence {
	return {
		rule: 'switching_burst',
		version: rule.version,
		falseAlarmEvery_days: rule.falseAlarmEvery_days,
		horizonWindows: rule.horizonWindows,
		clearPValue: rule.clearPValue,
		clearWindows: rule.clearWindows
	};
}

function uncertaintyOf(run: DetectorContext<'switching_burst'>['run'], p: RateProcess): { [key: string]: JsonValue } | null {
	const u = modelUncertainty(run, p);
	return u && { W0_sigma: u.W0_sigma, A_sigma: u.A_sigma, covariance: u.covariance, stated: u.stated, bandSigmas: BAND_SIGMAS };
}

const noun = (p: RateProcess, n: number) => (p === 'switching' ? (n === 1 ? 'switch' : 'switches') : n === 1 ? 'escape' : 'escapes');

export const switchingBurst: Detector<'switching_burst', SwitchingBurstState> = {
	kind: 'switching_burst',
	stateSchema: switchingBurstStateSchema,

	init: () => ({ switching: freshProcess(), escape: freshProcess() }),

	onFrame(state, frame, ctx): Signal[] {
		const { rule, expected } = ctx;
		const active = processes(rule, expected);
		if (active.length === 0 || !expected) return [];
		const exact = rule.clearPValue > 0.5;
		const tests: Test[] = [];
		for (const p of active) {
			const e = expected[p]!;
			const ps = state[p];
			const u = modelUncertainty(ctx.run, p)!;
			const tested = e.expected * Math.exp(clampLnReference(lnBandHalfWidth(u, activationX(u, expected.T_mK))));
			tests.push({
				process: p,
				scope: 'window',
				observed: e.count,
				expected: e.expected,
				tested,
				exposure_s: e.exposure_s,
				fromSeq: frame.seq,
				toSeq: frame.seq,
				from_ms: frame.t,
				to_ms: frame.t,
				windows: 1,
				pValue: tail(e.count, tested, exact)
			});
			if (rule.horizonWindows >= 2) {
				if (!ps.horizon || ps.horizon.size !== rule.horizonWindows || ps.horizon.width !== WIDTH)
					ps.horizon = createSliding(rule.horizonWindows, WIDTH, SUMMED);
				const h = ps.horizon;
				pushRow(h, [e.count, e.expected, tested, e.exposure_s, frame.seq, frame.t]);
				if (h.len >= 2) {
					tests.push({
						process: p,
						scope: 'horizon',
						observed: h.sums[COUNT],
						expected: h.sums[EXPECTED],
						tested: h.sums[TESTED],
						exposure_s: h.sums[EXPOSURE],
						fromSeq: oldest(h, SEQ),
						toSeq: frame.seq,
						from_ms: oldest(h, T_MS),
						to_ms: frame.t,
						windows: h.len,
						pValue: tail(h.sums[COUNT], h.sums[TESTED], exact)
					});
				}
			}
		}
		const alphaWindow = windowAlpha(frame.window_s, rule.falseAlarmEvery_days);
		const alpha = alphaWindow / tests.length;
		const signals: Signal[] = [];
		for (const p of active) {
			const mine = tests.filter((t) => t.process === p);
			const worst = mine.reduce((a, b) => (b.pValue < a.pValue ? b : a));
			const signal = judge(state[p], p, mine, worst, alpha, alphaWindow, tests.length, frame, ctx);
			if (signal) signals.push(signal);
		}
		return signals;
	},

	onRuleChange(state, previous, next) {
		if (previous.horizonWindows !== next.horizonWindows) {
			state.switching.horizon = null;
			state.escape.horizon = null;
		}
		state.switching.quiet = 0;
		state.escape.quiet = 0;
	},

	onRunChange(state, at_ms, ctx): Signal[] {
		// A new model predicts differently: what the horizon summed against the old one is stale.
		const signals: Signal[] = [];
		for (const p of ['switching', 'escape'] as const) {
			Object.assign(state[p], freshProcess());
			if (ctx.isOpen(p) && !ctx.run.rateModels?.[p]) {
				signals.push({
					type: 'clear',
					key: p,
					at_ms,
					summary: `No ${p} rate model any more; this condition is no longer watched`,
					evidence: { ...ruleEvidence(ctx.rule), process: p, reason: 'rate_model_removed' }
				});
			}
		}
		return signals;
	}
};

function judge(
	ps: ProcessState,
	p: RateProcess,
	mine: Test[],
	worst: Test,
	alpha: number,
	alphaWindow: number,
	nTests: number,
	frame: Frame,
	ctx: DetectorContext<'switching_burst'>
): Signal | null {
	const { rule, expected, run } = ctx;
	const alarm = worst.pValue < alpha;
	const detail = () => ({
		...ruleEvidence(rule),
		process: p,
		alphaWindow,
		testsThisWindow: nTests,
		correction: 'bonferroni',
		worst: testEvidence(worst, alpha),
		tests: mine.map((t) => testEvidence(t, alpha)),
		temperature: { T_mK: expected!.T_mK, measured: expected!.measured },
		rateModel: rateModelEvidence(run, p),
		uncertainty: uncertaintyOf(run, p)
	});
	if (!ctx.isOpen(p)) {
		if (!alarm) return null;
		ps.quiet = 0;
		ps.worstP = worst.pValue;
		ps.windowsOpen = 0;
		const span =
			worst.scope === 'window' ? `in window ${frame.seq}` : `over ${worst.windows} windows (seq ${worst.fromSeq}–${worst.toSeq})`;
		return {
			type: 'open',
			key: p,
			severity: 'critical',
			at_ms: frame.t,
			seq: frame.seq,
			summary: `${worst.observed} ${noun(p, worst.observed)} ${span} where the rate model predicts ${fmt(worst.expected)}, at most ${fmt(worst.tested)} within its band (${fmtP(worst.pValue)}, limit α = ${alpha.toExponential(1)})`,
			evidence: detail()
		};
	}
	ps.windowsOpen += 1;
	if (!mine.every((t) => t.pValue >= rule.clearPValue)) {
		ps.quiet = 0;
		if (alarm && ps.worstP !== null && worst.pValue < ps.worstP / 10) {
			ps.worstP = worst.pValue;
			return { type: 'update', key: p, at_ms: frame.t, seq: frame.seq, evidence: { ...detail(), windowsOpen: ps.windowsOpen } };
		}
		return null;
	}
	ps.quiet += 1;
	if (ps.quiet < rule.clearWindows) return null;
	const worstP = ps.worstP;
	const windowsOpen = ps.windowsOpen;
	ps.quiet = 0;
	ps.worstP = null;
	ps.windowsOpen = 0;
	return {
		type: 'clear',
		key: p,
		at_ms: frame.t,
		seq: frame.seq,
		summary: `${p === 'switching' ? 'Switching' : 'Escapes'} back within the predicted rate for ${rule.clearWindows} windows (every test p ≥ ${rule.clearPValue})`,
		evidence: { ...detail(), worstPValue: worstP, windowsOpen }
	};
}
