// The agent's side of wire protocol v1: one WebSocket that says hello, resends what the server lacks,
// streams new frames in batches, forgets what is acknowledged, and comes back after every cut.
import WebSocket from 'ws';
import {
	describeZodError,
	MAX_FRAMES_PER_MESSAGE,
	MAX_MESSAGE_BYTES,
	PROTOCOL_VERSION,
	serverMessageSchema,
	type ErrorCode,
	type Frame,
	type Hello
} from '../src/lib/protocol/index.ts';
import { createBackoff, type Backoff } from './backoff.ts';
import { AgentFatalError, AgentStoppedError, type ConnectionOptions, type Welcome } from './connection-types.ts';
import { packFrames } from './frame-batch.ts';
import { closeOf, stripUndefined, withTimeout } from './socket-helpers.ts';
import type { Spool } from './spool.ts';
import { Waiters } from './waiters.ts';

export { AgentFatalError, AgentStoppedError, type ConnectionOptions, type Welcome } from './connection-types.ts';

/** Close code the server uses when a newer connection for the same run replaces this one. */
export const CLOSE_REPLACED = 4000;

export class AgentConnection {
	private readonly opts: Required<Omit<ConnectionOptions, 'backoff' | 'log'>>;
	private readonly log: (line: string) => void;
	private readonly backoff: Backoff;
	private readonly spool: Spool;
	private ws: WebSocket | null = null;
	private welcomed = false;
	/** Frames of the current connection not sent yet, in order. */
	private outbox: Frame[] = [];
	private stopping = false;
	private ending = false;
	private endConfirmed = false;
	private endSentOn: WebSocket | null = null;
	private fatal: AgentFatalError | null = null;
	private rejectFailed: (err: AgentFatalError) => void = () => {};
	private readonly waiters = new Waiters();
	private reconnectTimer: NodeJS.Timeout | null = null;
	private flushTimer: NodeJS.Timeout | null = null;
	private heartbeatTimer: NodeJS.Timeout | null = null;
	private welcomeTimer: NodeJS.Timeout | null = null;
	private lastSendAt = 0;
	private lastHeardAt = 0;
	private maxBatchBytes: number;

	/** Rejects once with the reason the agent must give up; never resolves. */
	readonly failed: Promise<never>;
	/** The last welcome received, or null before the first. */
	lastWelcome: Welcome | null = null;
	/** How many times the server has welcomed this agent. */
	welcomes = 0;
	/** Frames sent, counting resends (for the log). */
	framesSent = 0;

	constructor(options: ConnectionOptions) {
		this.opts = {
			batchIntervalMs: 200,
			heartbeatMs: 15_000,
			pongTimeoutMs: 30_000,
			welcomeTimeoutMs: 15_000,
			maxInFlight: 10_000,
			maxBatchBytes: Math.floor(MAX_MESSAGE_BYTES * 0.85),
			...stripUndefined(options)
		} as Required<Omit<ConnectionOptions, 'backoff' | 'log'>>;
		this.log = options.log ?? (() => {});
		this.backoff = options.backoff ?? createBackoff();
		this.spool = options.spool;
		this.maxBatchBytes = this.opts.maxBatchBytes;
		this.failed = new Promise<never>((_, reject) => (this.rejectFailed = reject));
		this.failed.catch(() => {});
	}

	/** Connects, and keeps reconnecting until end(), stop() or a fatal error. */
	start(): void {
		if (this.ws || this.reconnectTimer || this.stopping) return;
		this.connect();
	}

	/** Frames spooled and not yet acknowledged. */
	get unacked(): number {
		return this.spool.size;
	}

	get isWelcomed(): boolean {
		return this.welcomed;
	}

	/**
	 * Spools the frames (on disk before this returns) and queues them for sending. Frames whose seq
	 * is already spooled or acknowledged are skipped; returns how many were taken.
	 */
	enqueue(frames: readonly Frame[]): number {
		const fresh = this.spool.add(frames);
		if (this.welcomed) {
			for (const f of fresh) this.outbox.push(f);
			if (this.outbox.length >= MAX_FRAMES_PER_MESSAGE) this.sendBatches(false);
			this.scheduleFlush();
		}
		return fresh.length;
	}

	/** Resolves at the next welcome (or at once if the current connection is welcomed). */
	async whenWelcomed(): Promise<Welcome> {
		await this.waitFor(() => this.welcomed);
		return this.lastWelcome as Welcome;
	}

	/** Resolves when every spooled frame has been acknowledged on a welcomed connection. */
	whenDrained(): Promise<void> {
		return this.waitFor(() => this.welcomed && this.spool.size === 0);
	}

	/** Resolves when fewer than `n` frames wait for an ack (back-pressure for a finite input). */
	whenBelow(n: number): Promise<void> {
		return this.waitFor(() => this.spool.size < n);
	}

	/**
	 * Waits until everything is acknowledged, sends `end`, and waits for the server to close the
	 * link. If the link drops first, it reconnects and sends `end` again.
	 */
	async end(reason: string, closeTimeoutMs = 10_000): Promise<void> {
		this.ending = true;
		for (;;) {
			await this.waitFor(() => this.endConfirmed || (this.welcomed && this.spool.size === 0));
			if (this.endConfirmed) return;
			const ws = this.ws;
			if (!ws || ws.readyState !== WebSocket.OPEN || !this.welcomed) {
				// Closing but the close event has not fired yet: let it, rather than spin.
				await new Promise((r) => setTimeout(r, 50));
				continue;
			}
			this.endSentOn = ws;
			ws.send(JSON.stringify({ type: 'end', reason }));
			await closeOf(ws, closeTimeoutMs);
			if (this.endConfirmed) return;
			if (this.fatal) throw this.fatal;
			this.log('the link closed before the server confirmed the end of the run; sending it again');
		}
	}

	/**
	 * Stops reconnecting, sends what is queued, waits up to `graceMs` for acks, then closes. The run
	 * stays open on the server and whatever is unacknowledged stays in the spool.
	 */
	async stop(graceMs = 1000): Promise<void> {
		this.stopping = true;
		this.clearTimer('reconnectTimer');
		const ws = this.ws;
		if (ws && this.welcomed && ws.readyState === WebSocket.OPEN) {
			this.sendBatches(true, true);
			await withTimeout(
				this.waitFor(() => this.spool.size === 0),
				graceMs
			).catch(() => {});
		}
		this.rejectWaiters(new AgentStoppedError());
		if (ws && ws.readyState !== WebSocket.CLOSED) {
			ws.close(1000, 'agent stopping');
			await closeOf(ws, 1000);
		}
		this.clearConnectionTimers();
	}

	private connect() {
		this.reconnectTimer = null;
		if (this.stopping) return;
		const ws = new WebSocket(this.opts.url, {
			headers: { Authorization: `Bearer ${this.opts.token}` },
			handshakeTimeout: this.opts.welcomeTimeoutMs
		});
		this.ws = ws;
		let httpStatus: number | null = null;

		ws.on('unexpected-response', (_req, res) => {
			httpStatus = res.statusCode ?? 0;
			res.resume();
			if (httpStatus === 401 || httpStatus === 403) {
				this.fail(
					new AgentFatalError(
						'token_refused',
						`token refused: ${this.opts.url} answered HTTP ${httpStatus}; check --token (it may be mistyped or revoked)`
					)
				);
			} else {
				this.log(`${this.opts.url} answered HTTP ${httpStatus} ${res.statusMessage ?? ''} instead of a WebSocket upgrade`);
			}
			ws.terminate();
		});
		ws.on('open', () => {
			if (ws !== this.ws) return;
			this.lastHeardAt = Date.now();
			const hello: Hello = { type: 'hello', protocol: PROTOCOL_VERSION, agent: this.opts.agent, run: this.opts.run };
			ws.send(JSON.stringify(hello));
			this.welcomeTimer = setTimeout(() => {
				this.log(`no welcome within ${this.opts.welcomeTimeoutMs / 1000} s; reconnecting`);
				ws.terminate();
			}, this.opts.welcomeTimeoutMs);
			this.heartbeatTimer = setInterval(() => this.heartbeat(ws), this.opts.heartbeatMs);
		});
		ws.on('message', (data, isBinary) => {
			if (ws !== this.ws) return;
			this.lastHeardAt = Date.now();
			this.onMessage(data.toString(), isBinary);
		});
		ws.on('pong', () => (this.lastHeardAt = Date.now()));
		ws.on('ping', () => (this.lastHeardAt = Date.now()));
		ws.on('error', (err) => {
			if (httpStatus === null) this.log(`connection error: ${err.message}`);
		});
		ws.on('close', (code, reason) => this.onClose(ws, code, reason.toString()));
	}

	private heartbeat(ws: WebSocket) {
		const silent = Date.now() - this.lastHeardAt;
		if (silent > this.opts.pongTimeoutMs) {
			this.log(`no pong from the server for ${(silent / 1000).toFixed(1)} s; dropping the link`);
			ws.terminate();
			return;
		}
		ws.ping();
	}

	private onClose(ws: WebSocket, code: number, reason: string) {
		if (ws !== this.ws) return;
		this.clearConnectionTimers();
		this.ws = null;
		this.welcomed = false;
		this.outbox = [];
		if (ws === this.endSentOn && code === 1000) {
			this.endConfirmed = true;
			this.stopping = true;
			this.log('run ended; the server closed the link');
			this.checkWaiters();
			return;
		}
		if (this.stopping || this.fatal) return;
		if (code === CLOSE_REPLACED) {
			// Our own stale sockets are ignored above, so this is another process streaming this run.
			this.fail(
				new AgentFatalError(
					'replaced',
					`another connection took over run "${this.opts.run.key}" (is a second agent running with this --run-key?)`
				)
			);
			return;
		}
		const delay = this.backoff.next();
		this.log(
			`disconnected (code ${code}${reason ? `, ${reason}` : ''}); ${this.spool.size} frames wait in the spool; ` +
				`reconnecting in ${(delay / 1000).toFixed(1)} s`
		);
		this.reconnectTimer = setTimeout(() => this.connect(), delay);
	}

	private onMessage(text: string, isBinary: boolean) {
		if (isBinary) return this.log('ignored a binary message from the server');
		let json: unknown;
		try {
			json = JSON.parse(text);
		} catch {
			return this.log(`ignored a message from the server that is not JSON: ${text.slice(0, 120)}`);
		}
		const parsed = serverMessageSchema.safeParse(json);
		if (!parsed.success) return this.log(`ignored a message from the server: ${describeZodError(parsed.error)}`);
		const msg = parsed.data;
		if (msg.type === 'welcome') this.onWelcome(msg);
		else if (msg.type === 'ack') this.onAck(msg.seq);
		else this.onServerError(msg.code, msg.message, msg.seq);
	}

	private onWelcome(msg: Welcome) {
		if (this.welcomed) return this.log('ignored a second welcome on the same connection');
		this.clearTimer('welcomeTimer');
		if (msg.lastSeq < this.spool.acknowledgedSeq) {
			this.log(
				`warning: the server now has only up to seq ${msg.lastSeq} but had acknowledged up to ${this.spool.acknowledgedSeq}; ` +
					`frames ${msg.lastSeq + 1}…${this.spool.acknowledgedSeq} are no longer in the spool`
			);
		}
		this.spool.ack(msg.lastSeq);
		this.welcomed = true;
		this.welcomes += 1;
		this.lastWelcome = { run: msg.run, lastSeq: msg.lastSeq };
		this.backoff.reset();
		this.outbox = this.spool.pending(msg.lastSeq);
		const resend = this.outbox.length
			? `resending ${this.outbox.length} spooled frames (seq ${this.outbox[0].seq}…${this.outbox[this.outbox.length - 1].seq})`
			: 'nothing to resend';
		this.log(`welcome: run ${msg.run}, server has up to seq ${msg.lastSeq}; ${resend}`);
		this.sendBatches(true);
		this.checkWaiters();
	}

	private onAck(seq: number) {
		if (this.spool.ack(seq) > 0) this.pruneOutbox();
		this.sendBatches(false);
		this.scheduleFlush();
		this.checkWaiters();
	}

	private onServerError(code: ErrorCode, message: string, seq?: number) {
		this.log(`server error ${code}${seq !== undefined ? ` (seq ${seq})` : ''}: ${message}`);
		switch (code) {
			case 'invalid_frame':
				if (seq !== undefined && this.spool.drop(seq)) {
					this.pruneOutbox();
					this.log(`dropped frame seq ${seq} from the spool: the server will never accept it`);
					this.checkWaiters();
				}
				break;
			case 'run_ended':
				if (this.ending && this.spool.size === 0) {
					this.endConfirmed = true;
					this.stopping = true;
					this.log('the run had already ended on the server');
					this.checkWaiters();
				} else {
					this.fail(
						new AgentFatalError(code, `run "${this.opts.run.key}" has ended on the server; start a new run with another --run-key`)
					);
				}
				break;
			case 'unauthorized':
				this.fail(new AgentFatalError(code, `the server refused this agent: ${message}`));
				break;
			case 'protocol_unsupported':
				this.fail(new AgentFatalError(code, `the server does not speak protocol ${PROTOCOL_VERSION}: ${message}`));
				break;
			case 'too_large':
				// Should not happen below the documented limit; halve the batches and resend them.
				this.maxBatchBytes = Math.max(64 * 1024, Math.floor(this.maxBatchBytes / 2));
				this.log(`batches now at most ${this.maxBatchBytes} bytes; reconnecting to resend`);
				this.ws?.terminate();
				break;
			default:
				break;
		}
	}

	private pruneOutbox() {
		this.outbox = this.outbox.filter((f) => this.spool.has(f.seq));
	}

	private scheduleFlush() {
		if (!this.welcomed || this.flushTimer || this.outbox.length === 0) return;
		const wait = Math.max(0, this.lastSendAt + this.opts.batchIntervalMs - Date.now());
		this.flushTimer = setTimeout(() => {
			this.flushTimer = null;
			this.sendBatches(true);
			this.scheduleFlush();
		}, wait);
	}

	/** Sends full batches; with `partial` also the last short one. Stops at the in-flight limit. */
	private sendBatches(partial: boolean, ignoreWindow = false) {
		const ws = this.ws;
		if (!ws || !this.welcomed || ws.readyState !== WebSocket.OPEN) return;
		while (this.outbox.length > 0) {
			const inFlight = this.spool.size - this.outbox.length;
			if (!ignoreWindow && inFlight >= this.opts.maxInFlight) return;
			if (!partial && this.outbox.length < MAX_FRAMES_PER_MESSAGE) return;
			const room = ignoreWindow ? Infinity : this.opts.maxInFlight - inFlight;
			const { message, count } = packFrames(this.outbox, room, this.maxBatchBytes);
			this.outbox.splice(0, count);
			ws.send(message, (err) => {
				if (err) this.log(`send failed: ${err.message}`);
			});
			this.framesSent += count;
			this.lastSendAt = Date.now();
		}
	}

	private waitFor(check: () => boolean): Promise<void> {
		return this.fatal ? Promise.reject(this.fatal) : this.waiters.wait(check);
	}

	private checkWaiters() {
		this.waiters.settle();
	}

	private rejectWaiters(err: Error) {
		this.waiters.rejectAll(err);
	}

	private fail(err: AgentFatalError) {
		if (this.fatal) return;
		this.fatal = err;
		this.stopping = true;
		this.clearTimer('reconnectTimer');
		this.rejectWaiters(err);
		this.rejectFailed(err);
		this.ws?.terminate();
	}

	private clearConnectionTimers() {
		this.clearTimer('flushTimer');
		this.clearTimer('welcomeTimer');
		if (this.heartbeatTimer) clearInterval(this.heartbeatTimer);
		this.heartbeatTimer = null;
	}

	private clearTimer(name: 'reconnectTimer' | 'flushTimer' | 'welcomeTimer') {
		const t = this[name];
		if (t) clearTimeout(t);
		this[name] = null;
	}
}
