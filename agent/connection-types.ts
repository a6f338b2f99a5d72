// What a connection is given and what it throws: its options, the server's welcome, and the two
// errors the agent's caller tells apart (fatal: stop and say why; stopped: shutting down).
import type { ErrorCode, RunDescription } from '../src/lib/protocol/index.ts';
import type { Backoff } from './backoff.ts';
import type { Spool } from './spool.ts';

/** A condition retrying cannot cure: the agent should stop and say why. */
export class AgentFatalError extends Error {
	constructor(
		readonly code: 'token_refused' | 'replaced' | ErrorCode,
		message: string
	) {
		super(message);
		this.name = 'AgentFatalError';
	}
}

/** Waiting was cut short because the agent is shutting down. */
export class AgentStoppedError extends Error {
	constructor() {
		super('the agent is stopping');
		this.name = 'AgentStoppedError';
	}
}

export interface ConnectionOptions {
	url: string;
	token: string;
	run: RunDescription;
	/** "name/version", sent in hello. */
	agent: string;
	spool: Spool;
	log?: (line: string) => void;
	/** Frames that trickle in are sent at most this often (a full batch goes at once). */
	batchIntervalMs?: number;
	/** WebSocket ping period. */
	heartbeatMs?: number;
	/** No pong (or other traffic) for this long: the link is dead, reconnect. */
	pongTimeoutMs?: number;
	/** Connected but no welcome after this long: reconnect. */
	welcomeTimeoutMs?: number;
	/** Frames sent and not yet acknowledged, at most (keeps a long resend from flooding memory). */
	maxInFlight?: number;
	/** Largest message the agent builds; kept below the server's limit for the envelope's sake. */
	maxBatchBytes?: number;
	backoff?: Backoff;
}

export interface Welcome {
	run: string;
	lastSeq: number;
}
