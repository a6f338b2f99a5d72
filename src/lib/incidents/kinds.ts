// The one list of incident kinds as people read them: pages, e-mails and reports all label kinds
// from here, so a kind is never called two things.
import type { RuleKind } from '../detect/rules';

export const KIND_LABELS: Record<RuleKind, string> = {
	lock_lost: 'Lock lost',
	agent_silent: 'Agent silent',
	switching_burst: 'Switching burst',
	rate_drift: 'Rate drift',
	occupancy_imbalance: 'Occupancy imbalance',
	aux_limit: 'Aux limit'
};

const isKnownKind = (kind: string): kind is RuleKind => Object.hasOwn(KIND_LABELS, kind);

/** "rate_drift" → "Rate drift"; a kind this build does not know is still shown in words. */
export function kindLabel(kind: string): string {
	if (isKnownKind(kind)) return KIND_LABELS[kind];
	const words = kind.replace(/[_-]+/g, ' ').trim();
	return words.charAt(0).toUpperCase() + words.slice(1);
}

const KEY_WORDS: Record<string, string> = {
	switching: 'switching',
	escape: 'escapes',
	'switching:model': 'switching model mismatch',
	'escape:model': 'escape model mismatch',
	states: 'phase states',
	pairs: 'switch pairs'
};

/** The condition key in words ("switching:model" → "switching model mismatch"); aux names stay as they are. */
export function keyLabel(kind: string, key: string | null | undefined): string {
	if (!key) return '';
	if (kind === 'aux_limit') return key;
	return KEY_WORDS[key] ?? key.replace(/[_:]+/g, ' ');
}

/** "Rate drift · switching" — the heading of one incident. */
export function incidentTitle(kind: string, key?: string | null): string {
	const k = keyLabel(kind, key);
	return k ? `${kindLabel(kind)} · ${k}` : kindLabel(kind);
}
