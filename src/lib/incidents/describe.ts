// An incident in plain sentences, one pure function per kind, shared by the incident page and
// the alert e-mail: what happened, where, how far from expected (with its interval) and since
// when. No field names of the stored evidence ever reach the text.
import { kindLabel } from './kinds';
import type { Json } from './read';
import { strAt } from './read';
import { describeRateDrift, describeSwitchingBurst } from './describe-rates';
import { describeAgentSilent, describeAuxLimit, describeLockLost } from './describe-levels';
import { describeOccupancy } from './describe-occupancy';

export type IncidentFacts = {
	kind: string;
	key?: string | null;
	evidence: Json;
	/** Phase states of the run (for angles); taken from the evidence when absent. */
	states?: number;
	setupName?: string;
	runName?: string;
};

export type Description = {
	/** One sentence: what happened and where. */
	what: string;
	/** The numbers behind it, each a sentence. */
	details: string[];
};

export type KindDescriber = (f: IncidentFacts) => Description;

const DESCRIBERS: Record<string, KindDescriber> = {
	rate_drift: describeRateDrift,
	switching_burst: describeSwitchingBurst,
	lock_lost: describeLockLost,
	agent_silent: describeAgentSilent,
	aux_limit: describeAuxLimit,
	occupancy_imbalance: describeOccupancy
};

// Why a condition stopped being watched (the clear events that carry a reason instead of numbers).
const REASONS: Record<string, string> = {
	rule_disabled: 'The rule was switched off, so the condition is no longer watched.',
	process_not_watched: 'The rule no longer watches this rate.',
	rate_model_changed: 'The rate model changed, so the earlier comparison no longer applies; it is judged afresh.',
	rate_model_removed: 'There is no rate model any more, so this condition is no longer watched.',
	limit_removed: 'The limit was removed from the rule, so this value is no longer watched.'
};

/** " on Fridge Aster, run Cooldown 14" (or nothing when the names are not known). */
export function where(f: IncidentFacts): string {
	if (f.setupName && f.runName) return ` on ${f.setupName}, run ${f.runName}`;
	if (f.setupName) return ` on ${f.setupName}`;
	if (f.runName) return ` in run ${f.runName}`;
	return '';
}

export function describeIncident(f: IncidentFacts): Description {
	const reason = strAt(f.evidence, 'reason');
	if (reason) {
		return { what: `${kindLabel(f.kind)}${where(f)}: ${REASONS[reason] ?? 'The condition is no longer watched.'}`, details: [] };
	}
	const describer = DESCRIBERS[f.kind];
	if (describer) return describer(f);
	return { what: `${kindLabel(f.kind)}${where(f)}.`, details: [] };
}

/** The description as one paragraph of text. */
export function describeAsText(f: IncidentFacts): string {
	const d = describeIncident(f);
	return [d.what, ...d.details].join(' ');
}
