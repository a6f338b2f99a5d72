// What the detector engine tells the server: a condition opened, its evidence changed, or it cleared.
export type Severity = 'critical' | 'warning' | 'info';

export type JsonValue = null | boolean | number | string | JsonValue[] | { [key: string]: JsonValue };

/** Every incident says which rule raised it and which version of that rule was in force. */
export type Evidence = { rule: string; version: number } & { [key: string]: JsonValue };

/**
 * `at_ms` is the frame's own time `t` (agent clock) for frame-driven kinds, and the server's clock
 * for `agent_silent`. `key` tells apart several conditions of one kind (e.g. one per aux name);
 * it is absent for kinds that have a single condition per run.
 */
export type DetectorEvent =
	| {
			type: 'open';
			kind: string;
			key?: string;
			severity: Severity;
			at_ms: number;
			seq?: number;
			summary: string;
			evidence: Evidence;
	  }
	| { type: 'update'; kind: string; key?: string; at_ms: number; seq?: number; evidence: Evidence }
	| { type: 'clear'; kind: string; key?: string; at_ms: number; seq?: number; summary: string; evidence: Evidence };

/** What a detector asks for; the engine turns it into an event only when it is consistent. */
export type Signal =
	| { type: 'open'; key?: string; severity: Severity; at_ms: number; seq?: number; summary: string; evidence: Evidence }
	| { type: 'update'; key?: string; at_ms: number; seq?: number; evidence: Evidence }
	| { type: 'clear'; key?: string; at_ms: number; seq?: number; summary: string; evidence: Evidence };
