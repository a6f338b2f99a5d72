// A stand-in for Phasewarden's ingest in agent tests: speaks the server side of wire protocol v1
// over a real WebSocket on 127.0.0.1, and records what it received and what it committed.
import type { AddressInfo } from 'node:net';
import { WebSocketServer, type WebSocket } from 'ws';

export interface FakeServerOptions {
	port?: number;
	/** Frames committed before this server started (a restart carries these over). */
	committed?: number[];
	/** 'each': commit and ack after every frames message; 'none': never ack. */
	ackMode?: 'each' | 'none';
	/** Return an error instead of committing these seqs. */
	rejectSeqs?: number[];
	/** Answer hello with this error instead of welcome. */
	helloError?: { code: string; message: string };
	/** HTTP status for refusing the upgrade (e.g. 401), instead of accepting. */
	refuseWith?: number;
	autoPong?: boolean;
	/** Close every link with this code right after welcome (4000: replaced by a newer connection). */
	closeAfterWelcome?: number;
	/** Once this many frames have been received, the next frames message is not committed. */
	stopCommittingAfter?: number;
}

export class FakeServer {
	readonly options: FakeServerOptions;
	/** Seqs committed, in commit order, including those carried over. Duplicates would show here. */
	readonly committed: number[];
	/** Seqs received in frames messages by this instance, in order. */
	readonly received: number[] = [];
	readonly messages: { type: string; frames?: number; bytes: number }[] = [];
	readonly ends: string[] = [];
	connections = 0;
	upgradeAttempts = 0;
	private wss!: WebSocketServer;
	private committing = true;

	constructor(options: FakeServerOptions = {}) {
		this.options = options;
		this.committed = [...(options.committed ?? [])];
	}

	get lastSeq(): number {
		return this.committed.reduce((a, b) => Math.max(a, b), 0);
	}

	start(): Promise<number> {
		const o = this.options;
		this.wss = new WebSocketServer({
			host: '127.0.0.1',
			port: o.port ?? 0,
			autoPong: o.autoPong ?? true,
			verifyClient: (_info, cb) => {
				this.upgradeAttempts += 1;
				if (o.refuseWith) cb(false, o.refuseWith, 'refused');
				else cb(true);
			}
		});
		this.wss.on('connection', (ws) => this.onConnection(ws));
		return new Promise((resolve, reject) => {
			this.wss.once('listening', () => resolve((this.wss.address() as AddressInfo).port));
			this.wss.once('error', reject);
		});
	}

	private onConnection(ws: WebSocket) {
		this.connections += 1;
		ws.on('message', (data) => {
			const text = data.toString();
			const msg = JSON.parse(text);
			this.messages.push({ type: msg.type, frames: msg.frames?.length, bytes: Buffer.byteLength(text) });
			if (msg.type === 'hello') {
				if (this.options.helloError) {
					ws.send(JSON.stringify({ type: 'error', ...this.options.helloError }));
					ws.close(1008, this.options.helloError.code);
				} else {
					ws.send(JSON.stringify({ type: 'welcome', run: 'run-test', lastSeq: this.lastSeq }));
					if (this.options.closeAfterWelcome) ws.close(this.options.closeAfterWelcome, 'closed by the test');
				}
			} else if (msg.type === 'frames') {
				const seqs: number[] = msg.frames.map((f: { seq: number }) => f.seq);
				this.received.push(...seqs);
				const limit = this.options.stopCommittingAfter;
				if (limit !== undefined && this.received.length >= limit) this.committing = false;
				if (!this.committing) return;
				for (const seq of seqs) {
					if (this.options.rejectSeqs?.includes(seq)) {
						ws.send(JSON.stringify({ type: 'error', code: 'invalid_frame', seq, message: 'frames[0].lock: rejected by the test' }));
						continue;
					}
					this.committed.push(seq);
				}
				if (this.options.ackMode !== 'none') ws.send(JSON.stringify({ type: 'ack', seq: this.lastSeq }));
			} else if (msg.type === 'end') {
				this.ends.push(msg.reason);
				ws.close(1000, 'run ended');
			}
		});
	}

	/** Like a crash: every link cut at once, the port released. */
	crash(): Promise<void> {
		for (const client of this.wss.clients) client.terminate();
		return new Promise((resolve) => this.wss.close(() => resolve()));
	}
}

/** Waits until `check` holds, polling; fails after `timeoutMs` with `what`. */
export async function until(check: () => boolean, what: string, timeoutMs = 5000): Promise<void> {
	const start = Date.now();
	while (!check()) {
		if (Date.now() - start > timeoutMs) throw new Error(`timed out waiting for ${what}`);
		await new Promise((r) => setTimeout(r, 5));
	}
}
