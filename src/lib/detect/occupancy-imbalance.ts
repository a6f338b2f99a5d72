// occupancy_imbalance: at a symmetric operating point the K phase states should fill equally, and
// switching should use the pairs of states the setup expects.
//
// key 'states': a test of equal occupancy over the shots of the last horizonWindows windows, once
// the horizon holds minSwitches switches and escapes. Shots within one dwell episode are not
// independent, so the variance of the occupancy comes from the switching that is really there:
// the chi-square of occupancy-model.ts with effective samples from the horizon's observed
// `transitions` (junction-type devices whose 2M states switch mostly within saddle-sharing pairs
// are thereby expected, not an alarm), or batch means of the horizon where frames carry no
// transitions (occupancy-batch.ts). Runs only when the states are symmetric: rule `symmetric`,
// where 'auto' means zero or unknown detuning.
// key 'pairs': when frames carry `transitions`, the fraction of switches on pairs the setup does
// not expect, against the tolerated fraction, by an exact binomial upper tail.
// Both test at the level the false-alarm budget gives each window, divided between the tests run
// on that window (Bonferroni; see budget.ts). Each clears after clearWindows consecutive tested
// windows with p ≥ clearPValue. Windows whose counts do not have K entries are ignored.
import { z } from 'zod';
import type { Detector, DetectorContext } from './detector';
import type { Evidence, JsonValue, Signal } from './events';
import type { Frame } from '../protocol/frame';
import { windowAlpha } from './budget';
import { createSliding, oldest, pushRow, slidingSchema, type Sliding } from './sliding';
import {
	binomialUpperTail,
	chiSquareUpperTail,
	expectedPairSet,
	observedModes,
	occupancyModes,
	occupancyStatisticFromModes,
	type OccupancyTest
} from './occupancy-model';
import { BATCHES, batchMeansOccupancy, type BatchMeansTest } from './occupancy-batch';
import { fmt, fmtP } from './rate-evidence';
import type { OccupancyImbalanceRule } from './rules';
import type { ParsedRunInfo } from './run-info';

type Key = 'states' | 'pairs';

const keyStateSchema = z.object({
	quiet: z.number().int().min(0),
	worstP: z.number().nullable(),
	windowsOpen: z.number().int().min(0)
});
type KeyState = z.infer<typeof keyStateSchema>;

const occupancyStateSchema = z.object({
	/** Columns: K counts, then switches, escapes, unexpected, pair switches, windows with transitions (summed), then seq, t. */
	horizon: slidingSchema.nullable(),
	/** Per horizon row: the window's non-zero off-diagonal transitions as [index, count, …]. */
	pairRows: z.array(z.array(z.number().int())).nullable(),
	/** Sums of `transitions` over the horizon, K×K. */
	pairSums: z.array(z.number().int()).nullable(),
	states: keyStateSchema,
	pairs: keyStateSchema
});
export type OccupancyImbalanceState = z.infer<typeof occupancyStateSchema>;

const freshKey = (): KeyState => ({ quiet: 0, worstP: null, windowsOpen: 0 });

export function isSymmetric(rule: OccupancyImbalanceRule, run: ParsedRunInfo): boolean {
	if (rule.symmetric !== 'auto') return rule.symmetric;
	const detuning = run.operatingPoint?.detuning;
	return detuning === undefined || detuning === 0;
}

function ruleEvidence(rule: OccupancyImbalanceRule): Evidence {
	return {
		rule: 'occupancy_imbalance',
		version: rule.version,
		falseAlarmEvery_days: rule.falseAlarmEvery_days,
		horizonWindows: rule.horizonWindows,
		expectedPairs: rule.expectedPairs,
		clearPValue: rule.clearPValue,
		clearWindows: rule.clearWindows
	};
}

export const occupancyImbalance: Detector<'occupancy_imbalance', OccupancyImbalanceState> = {
	kind: 'occupancy_imbalance',
	stateSchema: occupancyStateSchema,

	init: () => ({ horizon: null, pairRows: null, pairSums: null, states: freshKey(), pairs: freshKey() }),

	onFrame(state, frame, ctx): Signal[] {
		const { rule, run } = ctx;
		const K = run.states;
		if (K < 2 || frame.counts.length !== K) return [];
		const h = record(state, frame, rule, K);
		let statesP: number | null = null;
		let pairsP: number | null = null;
		const switches = h.sums[K];
		const escapes = h.sums[K + 1];
		if (isSymmetric(rule, run) && switches + escapes >= rule.minSwitches) {
			const test = horizonOccupancy(state, h, K, rule, false);
			if (test) statesP = test.pValue;
		}
		const pairSwitches = h.sums[K + 3];
		if (pairSwitches >= rule.minPairSwitches) {
			const unexpected = h.sums[K + 2];
			const p0 = rule.maxUnexpectedFraction;
			// At or below its mean a binomial count has an upper tail of at least 1/2.
			pairsP = unexpected <= pairSwitches * p0 && rule.clearPValue <= 0.5 ? 1 : binomialUpperTail(unexpected, pairSwitches, p0);
		}
		const nTests = (statesP === null ? 0 : 1) + (pairsP === null ? 0 : 1);
		if (nTests === 0) return [];
		const alphaWindow = windowAlpha(frame.window_s, rule.falseAlarmEvery_days);
		const alpha = alphaWindow / nTests;
		const signals: Signal[] = [];
		for (const key of ['states', 'pairs'] as const) {
			const pValue = key === 'states' ? statesP : pairsP;
			if (pValue === null) continue;
			const action = judge(state[key], key, pValue, alpha, rule, ctx.isOpen(key));
			if (action) signals.push(signalFor(action, state, key, h, frame, { alpha, alphaWindow, nTests }, ctx));
		}
		return signals;
	},

	onRuleChange(state, previous, next) {
		if (previous.horizonWindows !== next.horizonWindows) {
			state.horizon = null;
			state.pairRows = null;
			state.pairSums = null;
		}
		if (JSON.stringify(previous.expectedPairs) !== JSON.stringify(next.expectedPairs)) {
			// Which switches count as unexpected changed: recount them from the next window on.
			state.horizon = null;
			state.pairRows = null;
			state.pairSums = null;
		}
		state.states.quiet = 0;
		state.pairs.quiet = 0;
	}
};

type TransitionsTest = OccupancyTest & { method: 'observed transitions'; pValue: number };
type HorizonTest = TransitionsTest | BatchMeansTest;

/**
 * The equal-occupancy test of the horizon. When every window in it carried `transitions`, the
 * effective samples follow the switching graph those transitions show (occupancy-model.ts,
 * observedModes), so states that switch mostly within pairs are judged on the few cross-pair
 * switches that really relax the slow modes. Otherwise the variance comes from batch means of the
 * horizon itself (occupancy-batch.ts), once the horizon is full. Null when there is nothing to test.
 * `exact` computes the tail even where the decision does not need it (for evidence).
 */
function horizonOccupancy(
	state: OccupancyImbalanceState,
	h: Sliding,
	K: number,
	rule: OccupancyImbalanceRule,
	exact: boolean
): HorizonTest | null {
	const withTransitions = h.sums[K + 4];
	if (withTransitions === h.len && state.pairSums) {
		const stat = occupancyStatisticFromModes(h.sums.slice(0, K), observedModes(K, state.pairSums), h.sums[K + 1], exact, true);
		if (!stat || stat.dof === 0) return null;
		// χ² ≤ its dof has an upper tail of at least 0.3, all the decision needs then.
		const pValue = !exact && rule.clearPValue <= 0.3 && stat.statistic <= stat.dof ? 1 : chiSquareUpperTail(stat.statistic, stat.dof);
		return { ...stat, method: 'observed transitions', pValue };
	}
	if (h.len < h.size || h.len < 2 * BATCHES) return null;
	const perBatch = Math.floor(h.len / BATCHES);
	const skip = h.len - perBatch * BATCHES;
	// Rows are read in place (oldest first from the write position): this runs on every window.
	const batches: number[][] = [];
	const start = h.len === h.size ? h.head : 0;
	for (let b = 0; b < BATCHES; b++) {
		const counts = new Array<number>(K).fill(0);
		for (let r = skip + b * perBatch; r < skip + (b + 1) * perBatch; r++) {
			let base = start + r;
			if (base >= h.size) base -= h.size;
			base *= h.width;
			for (let i = 0; i < K; i++) counts[i] += h.rows[base + i];
		}
		batches.push(counts);
	}
	return batchMeansOccupancy(batches, occupancyModes(K, rule.expectedPairs).vectors);
}

/** Adds the frame to the horizon (and its transitions to the pair sums); returns the horizon. */
function record(state: OccupancyImbalanceState, frame: Frame, rule: OccupancyImbalanceRule, K: number): Sliding {
	if (!state.horizon || state.horizon.size !== rule.horizonWindows || state.horizon.width !== K + 7) {
		state.horizon = createSliding(rule.horizonWindows, K + 7, K + 5);
		state.pairRows = Array.from({ length: rule.horizonWindows }, () => []);
		state.pairSums = new Array<number>(K * K).fill(0);
	}
	const h = state.horizon;
	const rows = state.pairRows!;
	const sums = state.pairSums!;
	const slot = h.head;
	if (h.len === h.size) {
		const old = rows[slot];
		for (let i = 0; i < old.length; i += 2) sums[old[i]] -= old[i + 1];
	}
	let unexpected = 0;
	let total = 0;
	const sparse: number[] = [];
	const tr = frame.transitions;
	const hasTransitions = !!tr && tr.length === K * K;
	if (tr && hasTransitions) {
		const expected = pairSetFor(K, rule);
		for (let from = 0; from < K; from++) {
			for (let to = 0; to < K; to++) {
				const n = tr[from * K + to];
				if (n === 0 || from === to) continue;
				const idx = from * K + to;
				sparse.push(idx, n);
				sums[idx] += n;
				total += n;
				if (!expected.has(Math.min(from, to) * K + Math.max(from, to))) unexpected += n;
			}
		}
	}
	rows[slot] = sparse;
	const row = [...frame.counts, frame.switches, frame.escapes, unexpected, total, hasTransitions ? 1 : 0, frame.seq, frame.t];
	pushRow(h, row);
	return h;
}

const namedPairSets = new Map<string, Set<number>>();
const listedPairSets = new WeakMap<object, Map<number, Set<number>>>();
/** The expected pairs as a set, remembered per rule value (looked up for every window). */
function pairSetFor(K: number, rule: OccupancyImbalanceRule): Set<number> {
	const pairs = rule.expectedPairs;
	if (typeof pairs === 'string') {
		const key = `${K}:${pairs}`;
		let set = namedPairSets.get(key);
		if (!set) namedPairSets.set(key, (set = expectedPairSet(K, pairs)));
		return set;
	}
	let byK = listedPairSets.get(pairs);
	if (!byK) listedPairSets.set(pairs, (byK = new Map()));
	let set = byK.get(K);
	if (!set) byK.set(K, (set = expectedPairSet(K, pairs)));
	return set;
}

function extremes(fractions: number[], residuals: number[]) {
	let over = 0;
	let under = 0;
	for (let i = 1; i < fractions.length; i++) {
		if (residuals[i] > residuals[over]) over = i;
		if (residuals[i] < residuals[under]) under = i;
	}
	const describe = (i: number) => ({ state: i, fraction: fractions[i], residual: residuals[i] });
	return { mostOver: describe(over), mostUnder: describe(under) };
}

function statesEvidence(
	test: HorizonTest,
	counts: number[],
	switches: number,
	escapes: number,
	K: number,
	span: { [key: string]: JsonValue }
): { [key: string]: JsonValue } {
	const common = {
		test: 'equal occupancy',
		horizon: span,
		counts: [...counts],
		shots: counts.reduce((a, b) => a + b, 0),
		switches,
		escapes,
		fractions: test.fractions,
		expectedFraction: 1 / K,
		pValue: test.pValue,
		...extremes(test.fractions, test.residuals)
	};
	if (test.method === 'batch means') {
		return { ...common, method: 'batch means, Student t per mode, Bonferroni', batches: test.batches, dof: test.dof, t: test.t };
	}
	return {
		...common,
		method: 'chi-square, effective samples from the observed transitions',
		effectiveSamples: test.effective,
		statistic: test.statistic,
		dof: test.dof
	};
}

function statesSummary(test: HorizonTest, K: number, windows: number): string {
	const { mostOver, mostUnder } = extremes(test.fractions, test.residuals);
	const pct = (x: number) => `${fmt(100 * x)} %`;
	const how =
		test.method === 'batch means'
			? `batch means of ${test.batches} batches, ${fmtP(test.pValue)}`
			: `χ² = ${fmt(test.statistic)} on ${test.dof} dof, ${fmtP(test.pValue)}`;
	return `Phase states fill unequally over the last ${windows} windows: state ${mostOver.state} holds ${pct(mostOver.fraction)}, state ${mostUnder.state} ${pct(mostUnder.fraction)}, against ${pct(1 / K)} each (${how})`;
}

function pairsEvidence(
	state: OccupancyImbalanceState,
	unexpected: number,
	switches: number,
	K: number,
	rule: OccupancyImbalanceRule,
	span: { [key: string]: JsonValue }
): { [key: string]: JsonValue } {
	const expected = pairSetFor(K, rule);
	const sums = state.pairSums!;
	const top: { from: number; to: number; count: number }[] = [];
	for (let from = 0; from < K; from++) {
		for (let to = 0; to < K; to++) {
			const n = sums[from * K + to];
			if (n > 0 && from !== to && !expected.has(Math.min(from, to) * K + Math.max(from, to))) top.push({ from, to, count: n });
		}
	}
	top.sort((a, b) => b.count - a.count || a.from - b.from || a.to - b.to);
	return {
		test: 'binomial, unexpected pairs',
		horizon: span,
		unexpected,
		switches,
		fraction: unexpected / switches,
		maxUnexpectedFraction: rule.maxUnexpectedFraction,
		pValue: binomialUpperTail(unexpected, switches, rule.maxUnexpectedFraction),
		topPairs: top.slice(0, 5)
	};
}

type Action = { type: 'open' } | { type: 'update'; windowsOpen: number } | { type: 'clear'; worstP: number | null; windowsOpen: number };

/** Open, update or clear, from this window's p-value; changes the key's state accordingly. */
function judge(ks: KeyState, key: Key, pValue: number, alpha: number, rule: OccupancyImbalanceRule, open: boolean): Action | null {
	void key;
	const alarm = pValue < alpha;
	if (!open) {
		if (!alarm) return null;
		ks.quiet = 0;
		ks.worstP = pValue;
		ks.windowsOpen = 0;
		return { type: 'open' };
	}
	ks.windowsOpen += 1;
	if (pValue < rule.clearPValue) {
		ks.quiet = 0;
		if (alarm && ks.worstP !== null && pValue < ks.worstP / 10) {
			ks.worstP = pValue;
			return { type: 'update', windowsOpen: ks.windowsOpen };
		}
		return null;
	}
	ks.quiet += 1;
	if (ks.quiet < rule.clearWindows) return null;
	const action: Action = { type: 'clear', worstP: ks.worstP, windowsOpen: ks.windowsOpen };
	Object.assign(ks, freshKey());
	return action;
}

function signalFor(
	action: Action,
	state: OccupancyImbalanceState,
	key: Key,
	h: Sliding,
	frame: Frame,
	level: { alpha: number; alphaWindow: number; nTests: number },
	ctx: DetectorContext<'occupancy_imbalance'>
): Signal {
	const { rule, run } = ctx;
	const K = run.states;
	const counts = h.sums.slice(0, K);
	const switches = h.sums[K];
	const escapes = h.sums[K + 1];
	const statesTest = key === 'states' ? horizonOccupancy(state, h, K, rule, true) : null;
	const span = { fromSeq: oldest(h, K + 5), toSeq: frame.seq, from_ms: oldest(h, K + 6), to_ms: frame.t, windows: h.len };
	const evidence = {
		...ruleEvidence(rule),
		key,
		alpha: level.alpha,
		alphaWindow: level.alphaWindow,
		testsThisWindow: level.nTests,
		correction: 'bonferroni',
		symmetric: isSymmetric(rule, run),
		...(key === 'states'
			? statesTest
				? statesEvidence(statesTest, counts, switches, escapes, K, span)
				: {}
			: pairsEvidence(state, h.sums[K + 2], h.sums[K + 3], K, rule, span))
	};
	const base = { key, at_ms: frame.t, seq: frame.seq };
	if (action.type === 'open') {
		const summary =
			key === 'states'
				? statesTest
					? statesSummary(statesTest, K, h.len)
					: 'Phase states fill unequally'
				: pairsSummary(h.sums[K + 2], h.sums[K + 3], rule, h.len);
		return { type: 'open', severity: 'warning', ...base, summary, evidence };
	}
	if (action.type === 'update') return { type: 'update', ...base, evidence: { ...evidence, windowsOpen: action.windowsOpen } };
	return {
		type: 'clear',
		...base,
		summary:
			key === 'states'
				? `Phase states fill equally again (p ≥ ${rule.clearPValue} for ${rule.clearWindows} windows)`
				: `Switching back on the expected pairs (p ≥ ${rule.clearPValue} for ${rule.clearWindows} windows)`,
		evidence: { ...evidence, worstPValue: action.worstP, windowsOpen: action.windowsOpen }
	};
}

function pairsSummary(unexpected: number, switches: number, rule: OccupancyImbalanceRule, windows: number): string {
	const p0 = rule.maxUnexpectedFraction;
	return `${unexpected} of ${switches} switches over the last ${windows} windows (${fmt((100 * unexpected) / switches)} %) on pairs the setup does not expect, above the tolerated ${fmt(100 * p0)} % (${fmtP(binomialUpperTail(unexpected, switches, p0))})`;
}
