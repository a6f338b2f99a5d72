// Shapes of the JSON API as the pages read them (see the API contract); browser-safe, no server imports.
import type { Role } from '$lib/roles';

/** A moment: a Date from a page's loader (which calls the services), an ISO string from the JSON API. */
export type Instant = string | Date;

export type RunStatus = 'open' | 'ended';
export type IncidentState = 'open' | 'acknowledged' | 'resolved';
export type Severity = 'critical' | 'warning' | 'info';

export interface Run {
	id: string;
	setupId: string;
	setupName?: string;
	key: string;
	name: string;
	order: number;
	states: number;
	modeGHz: number;
	operatingPoint: Record<string, number | string | boolean> | null;
	agent: string;
	status: RunStatus;
	startedAt: Instant;
	endedAt: Instant | null;
	endReason: string | null;
	lastSeq: number;
	lastFrameT: number | null;
	lastFrameAt: Instant | null;
	lastLock: number | null;
	frameCount: number;
	gapCount: number;
}

export interface Setup {
	id: string;
	name: string;
	description: string;
	order: number;
	states: number;
	modeGHz: number;
	nominalMK: number;
	createdAt: Instant;
	openRuns: Run[];
	openIncidents: number;
	openCritical: number;
}

/** A stored frame as the API returns it: the wire protocol's own type, inferred from its schema. */
export type { Frame } from '$lib/protocol/frame';

export interface Incident {
	id: string;
	kind: string;
	key: string;
	state: IncidentState;
	severity: Severity;
	summary: string;
	evidence: Record<string, unknown>;
	runId: string;
	runName?: string;
	setupId: string;
	setupName?: string;
	openedAt: Instant;
	openedSeq: number | null;
	openedT: number | null;
	acknowledgedAt: Instant | null;
	resolvedAt: Instant | null;
	conditionActive: boolean;
}

export interface IncidentEvent {
	id: number | string;
	at: Instant;
	action: 'opened' | 'acknowledged' | 'resolved' | 'auto_resolved' | 'condition_cleared' | 'note' | 'paged' | 'escalated' | 'grouped';
	note: string | null;
	actorName: string | null;
}

export interface Gap {
	fromSeq: number;
	toSeq: number;
	detectedAt: Instant;
}

export interface Occupancy {
	counts: number[];
	vacuum: number;
	shots: number;
	/** Null when the run has no frame yet. */
	fromSeq: number | null;
	toSeq: number | null;
}

export interface AgentToken {
	id: string;
	setupId: string;
	label: string;
	prefix: string;
	createdAt: Instant;
	revokedAt: Instant | null;
	lastUsedAt: Instant | null;
}

export interface Person {
	id: string;
	name: string;
	email: string;
	role: Role;
	createdAt?: string;
	/** Deactivated: cannot sign in, API tokens refused. */
	banned?: boolean | null;
}

/** An outgoing webhook of a setup, as the API shows it (never its secret after creation). */
export interface Webhook {
	id: string;
	url: string;
	label: string;
	secretPrefix: string;
	createdAt: Instant;
}
