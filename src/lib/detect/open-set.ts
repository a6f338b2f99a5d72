// The rule "at most one open condition per (kind, key) per run", applied to what detectors ask for.
import type { DetectorEvent, Signal } from './events';

export type OpenCondition = { kind: string; key?: string; openedAt_ms: number; openedSeq?: number };

const sameKey = (a: string | undefined, b: string | undefined) => (a ?? '') === (b ?? '');
const json = <T>(value: T): T => JSON.parse(JSON.stringify(value));

export function isOpen(open: readonly OpenCondition[], kind: string, key?: string): boolean {
	return open.some((o) => o.kind === kind && sameKey(o.key, key));
}

/**
 * Turns a detector's signal into an event when it is consistent with the open set (changing the
 * set in place), else drops it: an opening of something already open, or of a disabled rule; an
 * update or clear of something not open. Optional fields are left out rather than undefined, so
 * events compare equal after a trip through JSON.
 */
export function acceptSignal(open: OpenCondition[], kind: string, enabled: boolean, signal: Signal): DetectorEvent | null {
	const index = open.findIndex((o) => o.kind === kind && sameKey(o.key, signal.key));
	const key = signal.key === undefined ? {} : { key: signal.key };
	const seq = signal.seq === undefined ? {} : { seq: signal.seq };
	const evidence = json(signal.evidence);
	if (signal.type === 'open') {
		if (index >= 0 || !enabled) return null;
		open.push({ kind, ...key, openedAt_ms: signal.at_ms, ...(signal.seq === undefined ? {} : { openedSeq: signal.seq }) });
		return { type: 'open', kind, ...key, severity: signal.severity, at_ms: signal.at_ms, ...seq, summary: signal.summary, evidence };
	}
	if (index < 0) return null;
	if (signal.type === 'update') return { type: 'update', kind, ...key, at_ms: signal.at_ms, ...seq, evidence };
	open.splice(index, 1);
	return { type: 'clear', kind, ...key, at_ms: signal.at_ms, ...seq, summary: signal.summary, evidence };
}
