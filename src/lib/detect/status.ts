// Whether each detector can see, and if not why: silence from a detector that cannot run (no
// rate model, too few switches, rule turned off, run ended) must never read as a healthy run.
//
// Two levels. `ruleStatus` judges a setup's rules against what the setup has (rate models, the
// number of states): what can run at all, no run needed (the rules page). `detectorStatus` adds
// what a run's engine has seen so far (frames, switches in the occupancy horizon, chart steps,
// whether the latest frame carried a temperature). Detector states are read defensively: a field
// this module does not find (a state from another version) is skipped, never guessed, so a
// changed state shape costs a detail, not a wrong "inactive".
import type { JsonValue } from './events';
import { measuredTemperature, TEMPERATURE_AUX, type RateProcess } from './expected';
import { fmt } from './rate-evidence';
import type { DetectorRules, RuleKind } from './rules';
import { KIND_LABELS } from '../incidents/kinds';

/** The fixed detector order, the same as the engine's. */
export const DETECTOR_KINDS: readonly RuleKind[] = [
	'lock_lost',
	'agent_silent',
	'switching_burst',
	'rate_drift',
	'occupancy_imbalance',
	'aux_limit'
];

/** The rules' titles: the kinds' labels ($lib/incidents/kinds), the aux rule in the plural as it holds several limits. */
export const DETECTOR_TITLES: Record<RuleKind, string> = { ...KIND_LABELS, aux_limit: 'Aux limits' };

/** Stable names of the reasons, for code and tests; the texts are for people. */
export type StatusCode =
	| 'watching'
	| 'limited'
	| 'disabled'
	| 'run_ended'
	| 'no_frames'
	| 'no_rate_model'
	| 'single_state'
	| 'not_symmetric'
	| 'too_few_switches'
	| 'no_limits'
	| 'aux_absent'
	| 'no_opening_time';

export type StatusNoteCode =
	| 'no_temperature'
	| 'model_missing'
	| 'first_step'
	| 'horizon_filling'
	| 'escape_unwatched'
	| 'states_test_waiting'
	| 'states_test_off'
	| 'pair_test_waiting'
	| 'aux_partly_absent';

export type StatusNote = { code: StatusNoteCode; text: string };

export type DetectorStatus = {
	kind: RuleKind;
	/** Whether the detector can raise its incident from the next frame on. */
	active: boolean;
	/** 'watching' (active, nothing to add), 'limited' (active, see notes), else why it is not. */
	code: StatusCode;
	/** Why not, when inactive; what it cannot see, when active but limited; null otherwise. */
	reason: string | null;
	/** Partial blindness of an active detector (e.g. a prediction at the nominal temperature). */
	notes: StatusNote[];
	detail?: { [key: string]: JsonValue };
};

/**
 * The facts about a run (or a setup) that decide what can run: the engine's run information, or
 * for a setup its number of states, nominal temperature and saved models (presence is what counts).
 */
export type StatusRun = {
	states: number;
	nominal_mK?: number;
	rateModels?: { switching?: { nominal_mK?: number } | null; escape?: { nominal_mK?: number } | null };
	operatingPoint?: { detuning?: number };
};

/** What the engine holds (its snapshot, or the same object read in place): only read here. */
export type EngineView = {
	rules: DetectorRules;
	run: StatusRun;
	lastSeq: number;
	ended: boolean;
	detectors: Record<string, unknown>;
};

export type StatusOptions = {
	/** The newest frame fed, when known: tells whether frames carry a temperature and the aux names. */
	lastFrame?: { aux?: Record<string, number> | null } | null;
	/** The run has ended (even if the engine was not told, e.g. a snapshot from before the end). */
	runEnded?: boolean;
};

// ---- defensive reads of detector state -------------------------------------------------------

const rec = (x: unknown): Record<string, unknown> | null =>
	x !== null && typeof x === 'object' && !Array.isArray(x) ? (x as Record<string, unknown>) : null;
const num = (x: unknown): number | null => (typeof x === 'number' && Number.isFinite(x) ? x : null);
const numArray = (x: unknown): number[] | null => (Array.isArray(x) && x.every((v) => typeof v === 'number') ? (x as number[]) : null);

/** A sliding horizon (sliding.ts) as far as it can be read: rows held, size, width and sums. */
function horizonOf(x: unknown): { len: number; size: number; width: number; sums: number[] } | null {
	const h = rec(x);
	const len = num(h?.len);
	const size = num(h?.size);
	const width = num(h?.width);
	const sums = numArray(h?.sums);
	return h && len !== null && size !== null && width !== null && sums ? { len, size, width, sums } : null;
}

// ---- assembling ----------------------------------------------------------------------------

function inactive(kind: RuleKind, code: StatusCode, reason: string, detail?: DetectorStatus['detail']): DetectorStatus {
	return { kind, active: false, code, reason, notes: [], ...(detail ? { detail } : {}) };
}

function active(kind: RuleKind, notes: StatusNote[], detail?: DetectorStatus['detail']): DetectorStatus {
	return {
		kind,
		active: true,
		code: notes.length ? 'limited' : 'watching',
		reason: notes.length ? notes.map((n) => n.text).join(' ') : null,
		notes,
		...(detail ? { detail } : {})
	};
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** The occupancy rule's symmetry, as occupancy-imbalance.ts decides it: 'auto' means zero or unknown detuning. */
function symmetricHere(rule: DetectorRules['occupancy_imbalance'], run: StatusRun): boolean {
	if (rule.symmetric !== 'auto') return rule.symmetric;
	const detuning = run.operatingPoint?.detuning;
	return detuning === undefined || detuning === 0;
}

function nominalOf(run: StatusRun, p: RateProcess): number | null {
	return run.nominal_mK ?? run.rateModels?.[p]?.nominal_mK ?? null;
}

/** The processes a rate detector would predict for under this rule, and which of them have a model. */
function rateProcesses(kind: 'switching_burst' | 'rate_drift', rules: DetectorRules, run: StatusRun) {
	const wanted: RateProcess[] =
		kind === 'rate_drift'
			? [...(rules.rate_drift.processes ?? ['switching'])]
			: rules.switching_burst.locked
				? ['switching', 'escape']
				: ['switching'];
	const modelled = wanted.filter((p) => run.rateModels?.[p]);
	return { wanted, modelled, missing: wanted.filter((p) => !modelled.includes(p)) };
}

function noRateModel(kind: RuleKind, wanted: RateProcess[]): DetectorStatus {
	const which = wanted.length === 2 ? 'switching or escape' : wanted[0];
	return inactive(kind, 'no_rate_model', `No rate model: it compares counts with a ${which} rate model, and this setup has none saved.`, {
		needs: wanted.map((p) => `${p} rate model`)
	});
}

// ---- what the rules and the setup allow (no run needed) ------------------------------------

/**
 * Whether each rule can run on a setup with these rules and rate models (run information without
 * frames): the rules page's view. The same checks open `detectorStatus`.
 */
export function ruleStatus(rules: DetectorRules, run: StatusRun): DetectorStatus[] {
	return DETECTOR_KINDS.map((kind) => {
		const blocked = configStatus(kind, rules, run);
		if (blocked) return blocked;
		return active(kind, configNotes(kind, rules, run));
	});
}

/** An inactive status when the configuration alone stops the detector, else null. */
function configStatus(kind: RuleKind, rules: DetectorRules, run: StatusRun): DetectorStatus | null {
	const rule = rules[kind];
	if (!rule?.enabled) return inactive(kind, 'disabled', 'Turned off in the rules.');
	switch (kind) {
		case 'switching_burst':
		case 'rate_drift': {
			const { wanted, modelled } = rateProcesses(kind, rules, run);
			return modelled.length === 0 ? noRateModel(kind, wanted) : null;
		}
		case 'occupancy_imbalance':
			return run.states < 2 ? inactive(kind, 'single_state', 'A one-state run has no occupancy to compare.') : null;
		case 'aux_limit':
			return rules.aux_limit.limits.length === 0 ? inactive(kind, 'no_limits', 'No aux limits are set.') : null;
		default:
			return null;
	}
}

/** What an active detector cannot see, from the configuration alone. */
function configNotes(kind: RuleKind, rules: DetectorRules, run: StatusRun): StatusNote[] {
	const notes: StatusNote[] = [];
	if (kind === 'switching_burst' || kind === 'rate_drift') {
		const { missing } = rateProcesses(kind, rules, run);
		for (const p of missing) notes.push({ code: 'model_missing', text: `No ${p} rate model: the ${p} rate is not tested.` });
		if (kind === 'switching_burst' && !rules.switching_burst.locked && run.rateModels?.escape) {
			notes.push({ code: 'escape_unwatched', text: 'Escapes are tested only when the rule says the run stays locked.' });
		}
	}
	if (kind === 'occupancy_imbalance') {
		const rule = rules.occupancy_imbalance;
		if (rule.symmetric === false) {
			notes.push({
				code: 'states_test_off',
				text: 'States are set as not symmetric: only the unexpected-pairs test runs (needs frames with transitions).'
			});
		}
	}
	return notes;
}

// ---- what a run's engine has seen ----------------------------------------------------------

/** Every detector's status for a run, in the fixed order. */
export function detectorStatus(engine: EngineView, options: StatusOptions = {}): DetectorStatus[] {
	const ended = engine.ended || options.runEnded === true;
	return DETECTOR_KINDS.map((kind) => {
		if (ended) return inactive(kind, 'run_ended', 'The run ended: nothing more is watched.');
		const blocked = configStatus(kind, engine.rules, engine.run);
		if (blocked) return blocked;
		return runStatus(kind, engine, options);
	});
}

function runStatus(kind: RuleKind, engine: EngineView, options: StatusOptions): DetectorStatus {
	const { rules, run } = engine;
	const state = rec(engine.detectors?.[kind]);
	const notes = configNotes(kind, rules, run);
	if (kind === 'agent_silent') {
		const heard = num(state?.lastHeard_ms);
		if (state && 'lastHeard_ms' in state && heard === null) {
			return inactive(kind, 'no_opening_time', 'The run has no opening time: silence is counted from the first frame.');
		}
		return active(kind, notes, { after_s: rules.agent_silent.after_s });
	}
	if (engine.lastSeq === 0) return inactive(kind, 'no_frames', 'Waiting for the first frame.');
	switch (kind) {
		case 'switching_burst':
			return switchingBurstStatus(engine, state, notes, options);
		case 'rate_drift':
			return rateDriftStatus(engine, state, notes, options);
		case 'occupancy_imbalance':
			return occupancyStatus(engine, state, notes);
		case 'aux_limit':
			return auxStatus(engine, notes, options);
		default:
			return active(kind, notes);
	}
}

/** A rate prediction without a measured temperature stands at the nominal one. */
function temperatureNote(run: StatusRun, processes: RateProcess[], options: StatusOptions): StatusNote | null {
	const frame = options.lastFrame;
	if (!frame || measuredTemperature({ aux: frame.aux ?? undefined }) !== null) return null;
	const nominal = processes.map((p) => nominalOf(run, p)).find((t) => t !== null);
	const at = nominal === undefined || nominal === null ? 'the nominal temperature' : `the nominal ${fmt(nominal)} mK`;
	return {
		code: 'no_temperature',
		text: `No mixing-chamber temperature (aux ${TEMPERATURE_AUX}) in the latest frame: the rate is predicted at ${at}, so a warmer fridge reads as a rate change.`
	};
}

function switchingBurstStatus(
	engine: EngineView,
	state: Record<string, unknown> | null,
	notes: StatusNote[],
	options: StatusOptions
): DetectorStatus {
	const { rules, run } = engine;
	const rule = rules.switching_burst;
	const { modelled } = rateProcesses('switching_burst', rules, run);
	const T = temperatureNote(run, modelled, options);
	if (T) notes.push(T);
	const detail: { [key: string]: JsonValue } = { processes: modelled };
	if (rule.horizonWindows >= 2) {
		const held = modelled.map((p) => horizonOf(rec(state?.[p])?.horizon)?.len).filter((n): n is number => n !== undefined);
		if (held.length) {
			const least = Math.min(...held);
			detail.horizonWindows = least;
			if (least < rule.horizonWindows) {
				notes.push({
					code: 'horizon_filling',
					text: `The horizon test sees ${least} of its ${rule.horizonWindows} windows so far; each window is tested alone already.`
				});
			}
		}
	}
	return active('switching_burst', notes, detail);
}

function rateDriftStatus(
	engine: EngineView,
	state: Record<string, unknown> | null,
	notes: StatusNote[],
	options: StatusOptions
): DetectorStatus {
	const { rules, run } = engine;
	const { modelled } = rateProcesses('rate_drift', rules, run);
	const T = temperatureNote(run, modelled, options);
	if (T && rules.rate_drift.prediction !== 'nominal') notes.push(T);
	const steps: { [key: string]: JsonValue } = {};
	for (const p of modelled) {
		const n = num(rec(state?.[p])?.steps);
		if (n === null) continue;
		steps[p] = n;
		if (n === 0) {
			const block = rec(rec(state?.[p])?.block);
			const pooled = num(block?.windows);
			const so_far = pooled === null ? '' : ` (${plural(pooled, 'window')} pooled so far)`;
			notes.push({
				code: 'first_step',
				text: `The ${p} chart is pooling windows until their predicted count reaches ${fmt(rules.rate_drift.minExpectedPerStep)} for its first step${so_far}.`
			});
		}
	}
	return active('rate_drift', notes, { processes: modelled, steps });
}

function occupancyStatus(engine: EngineView, state: Record<string, unknown> | null, notes: StatusNote[]): DetectorStatus {
	const { rules, run } = engine;
	const rule = rules.occupancy_imbalance;
	const K = run.states;
	const symmetric = symmetricHere(rule, run);
	const h = horizonOf(state?.horizon);
	// The layout occupancy-imbalance.ts writes: K counts, switches, escapes, unexpected, pair switches,
	// windows that carried transitions, then seq and t.
	if (!h || h.width !== K + 7 || h.sums.length < K + 5) {
		if (state && state.horizon === null)
			return inactive('occupancy_imbalance', 'no_frames', `Waiting for the first frame with ${K} state counts.`);
		return active('occupancy_imbalance', notes);
	}
	const switches = h.sums[K] + h.sums[K + 1];
	const pairSwitches = h.sums[K + 3];
	const minSwitches = num((rule as Record<string, unknown>).minSwitches);
	const minPairSwitches = num((rule as Record<string, unknown>).minPairSwitches);
	const statesRuns = symmetric && (minSwitches === null || switches >= minSwitches);
	const pairsRuns = minPairSwitches === null ? pairSwitches > 0 : pairSwitches >= minPairSwitches;
	const detail: { [key: string]: JsonValue } = {
		symmetric,
		windows: h.len,
		horizonWindows: rule.horizonWindows,
		switches,
		minSwitches,
		pairSwitches,
		minPairSwitches
	};
	const over = h.len < rule.horizonWindows ? `in the ${plural(h.len, 'window')} so far` : `in the last ${plural(h.len, 'window')}`;
	const tooFew =
		symmetric && !statesRuns && minSwitches !== null
			? `${plural(switches, 'switch', 'switches')} ${over}: the occupancy test needs ${minSwitches} (${minSwitches - switches} more).`
			: null;
	const pairsWhy =
		pairSwitches === 0
			? 'The unexpected-pairs test needs frames with transitions.'
			: `${plural(pairSwitches, 'switch', 'switches')} with a known pair ${over}: the unexpected-pairs test needs ${minPairSwitches ?? 1}.`;
	if (!statesRuns && !pairsRuns) {
		if (!symmetric) {
			return inactive(
				'occupancy_imbalance',
				'not_symmetric',
				`The states are not symmetric here, so equal occupancy is not expected. ${pairsWhy}`,
				detail
			);
		}
		return inactive('occupancy_imbalance', 'too_few_switches', `Too few switches: ${tooFew}`, {
			...detail,
			needed: minSwitches! - switches
		});
	}
	if (!statesRuns) {
		notes.push(
			symmetric
				? { code: 'states_test_waiting', text: `Equal occupancy is not tested yet: ${tooFew}` }
				: { code: 'states_test_off', text: 'The states are not symmetric here: only the unexpected-pairs test runs.' }
		);
	} else if (!pairsRuns && pairSwitches > 0) {
		notes.push({ code: 'pair_test_waiting', text: pairsWhy });
	}
	return active('occupancy_imbalance', dedupe(notes), detail);
}

function auxStatus(engine: EngineView, notes: StatusNote[], options: StatusOptions): DetectorStatus {
	const names = engine.rules.aux_limit.limits.map((l) => l.name);
	const frame = options.lastFrame;
	if (!frame) return active('aux_limit', notes, { watched: names });
	const aux = frame.aux ?? {};
	const absent = names.filter((n) => typeof aux[n] !== 'number');
	if (absent.length === names.length) {
		return inactive('aux_limit', 'aux_absent', `The latest frame carries none of the watched aux values (${names.join(', ')}).`, {
			watched: names,
			absent
		});
	}
	if (absent.length) notes.push({ code: 'aux_partly_absent', text: `The latest frame does not carry ${absent.join(', ')}.` });
	return active('aux_limit', notes, { watched: names, absent });
}

function dedupe(notes: StatusNote[]): StatusNote[] {
	const seen = new Set<string>();
	return notes.filter((n) => (seen.has(n.code) ? false : (seen.add(n.code), true)));
}
