// In-process publish/subscribe for live updates (server-sent events to open pages).
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
	publish(event: LiveEvent) {
		this.emitter.emit('event', event);
	}
	subscribe(listener: (event: LiveEvent) => void): () => void {
		this.emitter.on('event', listener);
		return () => this.emitter.off('event', listener);
	}
}
