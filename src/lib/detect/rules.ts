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
	after_s: z.number().positive().max(7 * 86_400).default(60)
});

/**
 * One key per incident kind; later kinds add their own entry with `.prefault({})` so that a stored
 * rule set from before they existed still parses and picks up their defaults.
 */
export const detectorRulesSchema = z.strictObject({
	lock_lost: lockLostRuleSchema.prefault({}),
	agent_silent: agentSilentRuleSchema.prefault({})
});

export type DetectorRules = z.output<typeof detectorRulesSchema>;
export type DetectorRulesInput = z.input<typeof detectorRulesSchema>;
export type LockLostRule = DetectorRules['lock_lost'];
export type AgentSilentRule = DetectorRules['agent_silent'];
export type RuleKind = keyof DetectorRules;

export function defaultRules(): DetectorRules {
	return detectorRulesSchema.parse({});
}

/** Parses a rule set, throwing an error whose message names the first bad field. */
export function parseDetectorRules(input: unknown): DetectorRules {
	const result = detectorRulesSchema.safeParse(input);
	if (result.success) return result.data;
	const issue = result.error.issues[0];
	const path = issue.path.map(String).join('.') || '(rules)';
	throw new RangeError(`detector rules: ${path}: ${issue.message}`);
}
