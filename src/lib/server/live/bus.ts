// Publish/subscribe for live updates (server-sent events to open pages). Within a process it is an
// EventEmitter; with several app instances on one PostgreSQL server, `relayTo` also hands every
// event published here to the other instances (cluster/pg-cluster.ts, LISTEN/NOTIFY), and
// `deliverFromElsewhere` brings theirs to this process's subscribers.
import { EventEmitter } from 'node:events';

export type LiveEvent =
	| { type: 'frames'; runId: string; setupId: string; frames: unknown[] }
	| { type: 'run'; runId: string; setupId: string; run: unknown; detectors?: unknown }
	| { type: 'incident'; runId: string; setupId: string; incident: unknown };

export class LiveBus {
	private emitter = new EventEmitter();
	constructor() {
		this.emitter.setMaxListeners(0);
	}
	private relay: ((event: LiveEvent) => void) | null = null;
	publish(event: LiveEvent) {
		this.emitter.emit('event', event);
		this.relay?.(event);
	}
	/** Sends every event published in this process on to other instances too. */
	relayTo(relay: (event: LiveEvent) => void) {
		this.relay = relay;
	}
	/** An event another instance published: for this process's subscribers only. */
	deliverFromElsewhere(event: LiveEvent) {
		this.emitter.emit('event', event);
	}
	subscribe(listener: (event: LiveEvent) => void): () => void {
		this.emitter.on('event', listener);
		return () => this.emitter.off('event', listener);
	}
}
