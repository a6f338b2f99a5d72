// Escalation steps: step 0 pages the primary on call, step 1 the secondary, step 2 and later every
// operator of the setup. Pure, so the scheduler and its tests share one rule.

export type Severity = 'critical' | 'warning' | 'info';

export interface SeverityPolicy {
	/** Minutes to acknowledge before the next step; null: never escalate. */
	ackWithin_min: number | null;
	/** Highest step this severity reaches (1: stop after the secondary). */
	lastStep: number;
	/** Keep paging the last level every ackWithin_min until someone acknowledges. */
	repeat: boolean;
}

export type EscalationPolicy = Record<Severity, SeverityPolicy>;

export const DEFAULT_ESCALATION_POLICY: EscalationPolicy = {
	critical: { ackWithin_min: 10, lastStep: 2, repeat: true },
	warning: { ackWithin_min: 30, lastStep: 1, repeat: false },
	info: { ackWithin_min: null, lastStep: 0, repeat: false }
};

/** Who a step reaches: the rota's primary, its secondary, or every operator. */
export function stepLevel(step: number): 'primary' | 'secondary' | 'operators' {
	return step <= 0 ? 'primary' : step === 1 ? 'secondary' : 'operators';
}

/**
 * After `step` went out at `sentAt_ms`: the next step and when it is due, or null when escalation
 * ends here. Repeats of the last level get step numbers of their own (lastStep + 1, + 2, …) so each
 * repeat is a new notice rather than a duplicate of the one before.
 */
export function nextEscalation(
	policy: EscalationPolicy,
	severity: Severity,
	step: number,
	sentAt_ms: number
): { step: number; dueAt_ms: number } | null {
	const p = policy[severity];
	if (p.ackWithin_min === null || p.ackWithin_min <= 0) return null;
	if (step >= p.lastStep && !p.repeat) return null;
	return { step: step + 1, dueAt_ms: sentAt_ms + p.ackWithin_min * 60_000 };
}

const RANK: Record<Severity, number> = { info: 0, warning: 1, critical: 2 };
export function moreSevere(a: Severity, b: Severity): Severity {
	return RANK[a] >= RANK[b] ? a : b;
}
