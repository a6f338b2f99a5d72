// What one notification says about a group of incidents that opened together (one cause, one
// page): which incident leads the message and how the others are named. Pure, so the e-mail, the
// push and the text message tell the same story.
import { kindLabel } from './kinds';

export type GroupMember = { id: string; kind: string; severity: string; summary: string; openedAt: Date | string; head?: boolean };

/** Kinds that are causes of their own (the paging code links rate and occupancy findings to them). */
const CAUSE_KINDS = new Set(['lock_lost', 'agent_silent']);
const RANK: Record<string, number> = { critical: 2, warning: 1, info: 0 };

const time = (t: Date | string) => (t instanceof Date ? t.getTime() : Date.parse(t));

/**
 * The member a group's message leads with: the most severe; among equals a cause (a lost lock, a
 * silent agent) before its consequences; then the earliest. The page itself stays attached to the
 * group's head (the first to open), which is what the acknowledge link acknowledges.
 */
export function groupLead<T extends GroupMember>(members: readonly T[]): T {
	if (members.length === 0) throw new RangeError('groupLead: a group has at least one incident');
	return [...members].sort(
		(a, b) =>
			(RANK[b.severity] ?? -1) - (RANK[a.severity] ?? -1) ||
			Number(CAUSE_KINDS.has(b.kind)) - Number(CAUSE_KINDS.has(a.kind)) ||
			time(a.openedAt) - time(b.openedAt)
	)[0];
}

/** The most severe severity in the group. */
export function groupSeverity(members: readonly GroupMember[]): string {
	return groupLead(members).severity;
}

/** "and 3 related: switching burst, occupancy imbalance, rate drift" — or '' for a group of one. */
export function relatedPhrase(members: readonly GroupMember[], lead: GroupMember): string {
	const others = members.filter((m) => m.id !== lead.id);
	if (others.length === 0) return '';
	return `and ${others.length} related: ${others.map((m) => kindLabel(m.kind).toLowerCase()).join(', ')}`;
}
