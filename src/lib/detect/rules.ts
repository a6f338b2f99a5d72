// The rule set of one setup: a zod schema with the defaults a typical run needs, one entry per kind.
import { z } from 'zod';

/**
 * Fields every rule has. `version` goes up by one each time someone changes the rule, and every
 * incident records the version it was raised under, so a later reader knows which thresholds applied.
 */
const ruleBase = {
	enabled: z.boolean().default(true),
	version: z.number().int().min(1).default(1)
};

const fraction = z.number().min(0, 'must be between 0 and 1').max(1, 'must be between 0 and 1');
const windowCount = z.number().int('must be a whole number of windows').min(1).max(100_000);
const openProbability = z.number().gt(0, 'must lie strictly between 0 and 1').lt(1, 'must lie strictly between 0 and 1');

/**
 * The false-alarm budget of a statistical rule: on average at most one false alarm per this many
 * days of frames, whatever the frame rate (the per-window test level is window_s over the budget).
 */
const falseAlarmEvery_days = z
	.number()
	.min(0.001, 'must be at least 0.001 days (86.4 s)')
	.max(3650, 'must be at most 3650 days')
	.default(30);

export const lockLostRuleSchema = z
	.strictObject({
		...ruleBase,
		/** Lock quality below this counts as a low window. */
		threshold: fraction.default(0.5),
		/** Consecutive low windows that open the incident. */
		windows: windowCount.default(5),
		/** Lock quality at or above this counts towards clearing (hysteresis: ≥ threshold). */
		clearThreshold: fraction.default(0.7),
		/** Consecutive good windows that clear it. */
		clearWindows: windowCount.default(5)
	})
	.refine((r) => r.clearThreshold >= r.threshold, {
		message: 'must be at least threshold, so that the incident does not flap',
		path: ['clearThreshold']
	});

export const agentSilentRuleSchema = z.strictObject({
	...ruleBase,
	/** Seconds of server clock without a frame, while the run is open, before the incident opens. */
	after_s: z
		.number()
		.positive()
		.max(7 * 86_400)
		.default(60)
});

export const switchingBurstRuleSchema = z.strictObject({
	...ruleBase,
	falseAlarmEvery_days,
	/**
	 * Windows in the sliding horizon tested beside the single window (0 or 1: the single window
	 * only). A long horizon sees a moderate excess that no single window shows.
	 */
	horizonWindows: z.number().int('must be a whole number of windows').min(0).max(10_000).default(60),
	/**
	 * The run is meant to stay locked in its phase states: escapes from vacuum beyond the escape
	 * model's prediction over `vacuum_s` are a burst too (needs an escape rate model).
	 */
	locked: z.boolean().default(false),
	/** A window is quiet when every test's p-value is at least this (hysteresis: far above α). */
	clearPValue: openProbability.default(0.01),
	/** Consecutive quiet windows that clear the incident. */
	clearWindows: windowCount.default(30)
});

export const rateDriftRuleSchema = z.strictObject({
	...ruleBase,
	/** In-control average run length of the two-sided chart, in days of frames. */
	falseAlarmEvery_days,
	/** Rate ratio the upper CUSUM is tuned to detect (> 1). */
	ratioUp: z.number().gt(1, 'must be greater than 1').max(100).default(2),
	/** Rate ratio the lower CUSUM is tuned to detect (between 0 and 1). */
	ratioDown: z.number().gt(0, 'must lie strictly between 0 and 1').lt(1, 'must lie strictly between 0 and 1').default(0.5),
	/**
	 * Windows are pooled into one CUSUM step until their predicted count reaches this, so that
	 * slow rates still give steps whose run length the Markov-chain design describes well.
	 */
	minExpectedPerStep: z.number().min(0.05).max(20).default(0.5),
	/** Recent windows over which the incident reports the observed/predicted ratio, and clears. */
	horizonWindows: windowCount.default(300),
	/** Two-sided confidence of the exact ratio intervals in the evidence. */
	confidence: openProbability.default(0.95),
	/**
	 * 'temperature': the chart compares with the prediction at each window's mixing-chamber
	 * temperature, so a warmer fridge alone does not open it (aux_limit watches the fridge).
	 * 'nominal': it compares with the prediction at the nominal temperature, so a temperature
	 * excursion opens it too. Either way the evidence's temperature fit says whether the measured
	 * temperature explains the excess (temperature-attribution.ts).
	 */
	prediction: z.enum(['temperature', 'nominal']).default('temperature'),
	/**
	 * Hours of the run's first windows from which its own baseline rate is learned. Until then
	 * the chart compares with the edges of the rate model's 2σ band and a rate beyond it is an
	 * info finding (the operating point does not match its model), not a page; after it the
	 * chart compares with the baseline, within its own uncertainty. 0: never learn, compare with
	 * the model's band for the whole run and page on it.
	 */
	baseline_h: z.number().min(0, 'must not be negative').max(168, 'must be at most 168 hours (a week)').default(2),
	/**
	 * Rates the chart watches, each with its own incident (key = the process). They share the
	 * rule's budget: each chart's run length is the budget × the number watched (Bonferroni).
	 */
	processes: z
		.array(z.enum(['switching', 'escape']))
		.min(1, 'must name at least one process')
		.refine((p) => new Set(p).size === p.length, 'must not repeat a process')
		.default(['switching'])
});

const stateIndex = z.number().int('must be a whole state index').min(0).max(63);
const statePair = z.tuple([stateIndex, stateIndex]).refine(([i, j]) => i !== j, 'a pair must join two different states');

export const occupancyImbalanceRuleSchema = z.strictObject({
	...ruleBase,
	falseAlarmEvery_days,
	/**
	 * Whether the phase states are symmetric here, so that they should fill equally. 'auto': yes
	 * when the run's operating point has zero or unknown detuning.
	 */
	symmetric: z.union([z.boolean(), z.literal('auto')]).default('auto'),
	/**
	 * Windows summed for both tests. 1800 (half an hour of 1-s windows): at 0.85 switches/s a
	 * 300-window horizon holds about 250 switches, too few to see a 1.7× excess of one state at the
	 * budget's per-window level; 1800 sees it within the hour (tests/bench/occupancy-budget.bench.ts).
	 */
	horizonWindows: windowCount.default(1800),
	/**
	 * Switching pairs the setup expects: 'neighbours' (i ↔ i±1 mod K), 'all', or a list of pairs.
	 * The same graph sets how fast occupancy fluctuations relax, hence the effective sample size.
	 */
	expectedPairs: z
		.union([z.literal('neighbours'), z.literal('all'), z.array(statePair).min(1, 'must list at least one pair')])
		.default('neighbours'),
	/** Switches (and escapes) the horizon needs before its occupancy is tested. */
	minSwitches: z.number().int().min(1).max(1_000_000).default(100),
	/** Tolerated fraction of switches on pairs the setup does not expect. */
	maxUnexpectedFraction: z.number().min(0, 'must be between 0 and 1').lt(1, 'must be less than 1').default(0.25),
	/** Switches with a known pair (from `transitions`) the horizon needs before the pair test runs. */
	minPairSwitches: z.number().int().min(1).max(1_000_000).default(20),
	clearPValue: openProbability.default(0.01),
	clearWindows: windowCount.default(30)
});

const AUX_NAME = /^[A-Za-z0-9_]{1,32}$/;

export const auxLimitSchema = z
	.strictObject({
		name: z.string().regex(AUX_NAME, 'aux names are 1 to 32 of A-Z, a-z, 0-9 and _'),
		/** A value above this is out of limits. */
		above: z.number().finite().optional(),
		/** Back inside once at or below this (default: `above`). */
		clearBelow: z.number().finite().optional(),
		/** A value below this is out of limits. */
		below: z.number().finite().optional(),
		/** Back inside once at or above this (default: `below`). */
		clearAbove: z.number().finite().optional(),
		/** Consecutive windows out of limits that open the incident. */
		windows: windowCount.default(3),
		/** Consecutive windows back inside that clear it. */
		clearWindows: windowCount.default(3),
		severity: z.enum(['warning', 'critical']).default('warning')
	})
	.refine((l) => l.above !== undefined || l.below !== undefined, { message: 'needs above, below or both', path: ['above'] })
	.refine((l) => l.clearBelow === undefined || l.above !== undefined, { message: 'needs above', path: ['clearBelow'] })
	.refine((l) => l.clearAbove === undefined || l.below !== undefined, { message: 'needs below', path: ['clearAbove'] })
	.refine((l) => l.above === undefined || l.clearBelow === undefined || l.clearBelow <= l.above, {
		message: 'must be at most above, so that the incident does not flap',
		path: ['clearBelow']
	})
	.refine((l) => l.below === undefined || l.clearAbove === undefined || l.clearAbove >= l.below, {
		message: 'must be at least below, so that the incident does not flap',
		path: ['clearAbove']
	})
	.refine((l) => l.above === undefined || l.below === undefined || l.below < l.above, {
		message: 'must be less than above',
		path: ['below']
	});

export const auxLimitRuleSchema = z.strictObject({
	...ruleBase,
	limits: z
		.array(auxLimitSchema)
		.max(32)
		.refine((ls) => new Set(ls.map((l) => l.name)).size === ls.length, 'one limit per aux name (combine above and below in one)')
		.default([{ name: 'mxc_mK', above: 30, clearBelow: 28, windows: 3, clearWindows: 3, severity: 'warning' }])
});

/**
 * One key per incident kind; later kinds add their own entry with `.prefault({})` so that a stored
 * rule set from before they existed still parses and picks up their defaults.
 */
export const detectorRulesSchema = z.strictObject({
	lock_lost: lockLostRuleSchema.prefault({}),
	agent_silent: agentSilentRuleSchema.prefault({}),
	switching_burst: switchingBurstRuleSchema.prefault({}),
	rate_drift: rateDriftRuleSchema.prefault({}),
	occupancy_imbalance: occupancyImbalanceRuleSchema.prefault({}),
	aux_limit: auxLimitRuleSchema.prefault({})
});

export type DetectorRules = z.output<typeof detectorRulesSchema>;
export type DetectorRulesInput = z.input<typeof detectorRulesSchema>;
export type LockLostRule = DetectorRules['lock_lost'];
export type AgentSilentRule = DetectorRules['agent_silent'];
export type SwitchingBurstRule = DetectorRules['switching_burst'];
export type RateDriftRule = DetectorRules['rate_drift'];
export type OccupancyImbalanceRule = DetectorRules['occupancy_imbalance'];
export type AuxLimitRule = DetectorRules['aux_limit'];
export type AuxLimit = AuxLimitRule['limits'][number];
export type RuleKind = keyof DetectorRules;

export function defaultRules(): DetectorRules {
	return detectorRulesSchema.parse({});
}

/** A rule set refused: the message names the first bad field, and `path` and `problem` give it as data for forms. */
export class RulesRefused extends RangeError {
	constructor(
		readonly path: string[],
		readonly problem: string
	) {
		super(`detector rules: ${path.join('.') || '(rules)'}: ${problem}`);
	}
}

/** Parses a rule set, throwing RulesRefused for the first bad field. */
export function parseDetectorRules(input: unknown): DetectorRules {
	const result = detectorRulesSchema.safeParse(input);
	if (result.success) return result.data;
	const issue = result.error.issues[0];
	throw new RulesRefused(issue.path.map(String), issue.message);
}

/**
 * Checks that depend on the run: state indices in `expectedPairs` must exist in a K-state run.
 * Returns the first problem as a field path and a message, or null. The server calls it when a
 * rule set is saved for a setup; the engine calls it too and refuses an inconsistent rule set.
 */
export function checkRulesAgainstRun(rules: DetectorRules, states: number): { path: string; message: string } | null {
	const pairs = rules.occupancy_imbalance.expectedPairs;
	if (Array.isArray(pairs)) {
		for (let p = 0; p < pairs.length; p++) {
			for (let s = 0; s < 2; s++) {
				if (pairs[p][s] >= states) {
					return {
						path: `occupancy_imbalance.expectedPairs.${p}.${s}`,
						message: `state ${pairs[p][s]} does not exist in a ${states}-state run (states are 0…${states - 1})`
					};
				}
			}
		}
	}
	return null;
}
