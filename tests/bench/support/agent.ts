// A protocol-v1 agent for the benchmarks: hello, then frames with acks awaited by seq. It speaks to
// the app and to the raw baseline alike, so both are timed through the same client code.
import { performance } from 'node:perf_hooks';
import WebSocket from 'ws';
import { benchFrame, benchRun, type BenchFrame } from './frames';

interface AckWaiter {
	seq: number;
	resolve: (at_ms: number) => void;
	reject: (err: Error) => void;
}

export class BenchAgent {
	lastAck = 0;
	errors: string[] = [];
	private waiters: AckWaiter[] = [];
	private closed: Promise<void>;

	private constructor(
		readonly ws: WebSocket,
		readonly runId: string,
		readonly lastSeqAtWelcome: number
	) {
		this.closed = new Promise((resolve) => ws.once('close', () => resolve()));
		ws.on('message', (data) => this.onMessage(String(data)));
		ws.on('close', (code) => this.failAll(new Error(`socket closed (${code}) with ${this.waiters.length} acks pending`)));
	}

	/** Connects with a bearer token (ignored by the raw baseline) and says hello for `runKey`. */
	static async open(wsUrl: string, token: string, runKey: string): Promise<BenchAgent> {
		const ws = new WebSocket(wsUrl, { headers: { authorization: `Bearer ${token}` }, perMessageDeflate: false });
		await new Promise<void>((resolve, reject) => {
			ws.once('open', () => resolve());
			ws.once('unexpected-response', (_req, res) => reject(new Error(`${wsUrl}: HTTP ${res.statusCode}`)));
			ws.once('error', reject);
		});
		const welcome = await new Promise<{ run: string; lastSeq: number }>((resolve, reject) => {
			const timer = setTimeout(() => reject(new Error(`${wsUrl}: no welcome within 30 s`)), 30_000);
			ws.once('message', (data) => {
				clearTimeout(timer);
				const m = JSON.parse(String(data));
				if (m.type === 'welcome') resolve(m);
				else reject(new Error(`${wsUrl}: expected welcome, got ${String(data)}`));
			});
			ws.send(JSON.stringify({ type: 'hello', protocol: 1, agent: 'phasewarden-bench/1', run: benchRun(runKey) }));
		});
		return new BenchAgent(ws, welcome.run, welcome.lastSeq);
	}

	private onMessage(text: string) {
		const m = JSON.parse(text) as { type: string; seq?: number; code?: string; message?: string };
		if (m.type === 'ack' && typeof m.seq === 'number') {
			const at = performance.now();
			this.lastAck = Math.max(this.lastAck, m.seq);
			const due = this.waiters.filter((w) => w.seq <= this.lastAck);
			this.waiters = this.waiters.filter((w) => w.seq > this.lastAck);
			for (const w of due) w.resolve(at);
		} else if (m.type === 'error') {
			this.errors.push(`${m.code}: ${m.message}`);
			if (this.errors.length === 1) console.error(`agent ${this.runId}: server error ${m.code}: ${m.message}`);
		}
	}

	private failAll(err: Error) {
		const waiting = this.waiters;
		this.waiters = [];
		for (const w of waiting) w.reject(err);
	}

	send(frames: readonly BenchFrame[]) {
		this.ws.send(JSON.stringify({ type: 'frames', frames }));
	}

	/** Resolves with performance.now() at the ack that covers `seq`. */
	ackOf(seq: number, timeout_ms = 120_000): Promise<number> {
		if (this.lastAck >= seq) return Promise.resolve(performance.now());
		return new Promise((resolve, reject) => {
			const timer = setTimeout(
				() =>
					reject(
						new Error(
							`run ${this.runId}: no ack for seq ${seq} within ${timeout_ms} ms (last ack ${this.lastAck}; errors: ${this.errors.slice(0, 3).join('; ')})`
						)
					),
				timeout_ms
			);
			timer.unref();
			this.waiters.push({
				seq,
				resolve: (at) => (clearTimeout(timer), resolve(at)),
				reject: (err) => (clearTimeout(timer), reject(err))
			});
		});
	}

	/** Sends the frames as one message; resolves with ms from send to the ack of the last one. */
	async commit(frames: readonly BenchFrame[]): Promise<number> {
		const t0 = performance.now();
		this.send(frames);
		return (await this.ackOf(frames[frames.length - 1].seq)) - t0;
	}

	/**
	 * Streams `count` frames after `fromSeq` in messages of `perMessage`, keeping at most `inFlight`
	 * messages unacked (as an agent with a spool does), and resolves once the last one is acked.
	 */
	async stream(fromSeq: number, count: number, perMessage: number, inFlight: number, t0_ms: number): Promise<void> {
		const lastSeqOf: number[] = [];
		let seq = fromSeq;
		const end = fromSeq + count;
		for (let m = 0; seq < end; m++) {
			if (m >= inFlight) await this.ackOf(lastSeqOf[m - inFlight]);
			const batch: BenchFrame[] = [];
			for (let i = 0; i < perMessage && seq < end; i++) {
				seq++;
				batch.push(benchFrame(seq, t0_ms + seq * 1000));
			}
			this.send(batch);
			lastSeqOf.push(seq);
		}
		await this.ackOf(end);
	}

	async close() {
		if (this.ws.readyState !== WebSocket.CLOSED) this.ws.close();
		await this.closed;
	}
}
