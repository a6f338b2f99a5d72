// A minimal protocol-v1 client for tests: hello, send frames, collect acks and errors.
import WebSocket from 'ws';
import type { ServerMessage } from '../../../src/lib/protocol/messages';

export interface TestAgent {
	ws: WebSocket;
	welcome: Extract<ServerMessage, { type: 'welcome' }>;
	messages: ServerMessage[];
	lastAck(): number;
	send(msg: unknown): void;
	waitFor(pred: (m: ServerMessage) => boolean, timeoutMs?: number): Promise<ServerMessage>;
	close(): Promise<void>;
}

export const RUN = { key: 'it-run-1', name: 'Integration run', order: 3, states: 6, mode_GHz: 5.0 };

export function connect(url: string, token: string | null): Promise<WebSocket> {
	return new Promise((resolve, reject) => {
		const ws = new WebSocket(url, { headers: token ? { authorization: `Bearer ${token}` } : {} });
		ws.once('open', () => resolve(ws));
		ws.once('unexpected-response', (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
		ws.once('error', reject);
	});
}

export async function startAgent(url: string, token: string, run = RUN): Promise<TestAgent> {
	const ws = await connect(url, token);
	const messages: ServerMessage[] = [];
	const waiters: { pred: (m: ServerMessage) => boolean; resolve: (m: ServerMessage) => void }[] = [];
	ws.on('message', (data) => {
		const m = JSON.parse(String(data)) as ServerMessage;
		messages.push(m);
		for (const w of [...waiters]) {
			if (w.pred(m)) {
				waiters.splice(waiters.indexOf(w), 1);
				w.resolve(m);
			}
		}
	});
	const waitFor = (pred: (m: ServerMessage) => boolean, timeoutMs = 10_000) => {
		const found = messages.find(pred);
		if (found) return Promise.resolve(found);
		return new Promise<ServerMessage>((resolve, reject) => {
			const timer = setTimeout(() => reject(new Error(`no matching message; got ${JSON.stringify(messages.slice(-5))}`)), timeoutMs);
			waiters.push({ pred, resolve: (m) => (clearTimeout(timer), resolve(m)) });
		});
	};
	ws.send(JSON.stringify({ type: 'hello', protocol: 1, agent: 'it-agent/1', run }));
	const welcome = (await waitFor((m) => m.type === 'welcome')) as TestAgent['welcome'];
	return {
		ws,
		welcome,
		messages,
		lastAck: () => Math.max(0, ...messages.filter((m) => m.type === 'ack').map((m) => (m as { seq: number }).seq)),
		send: (msg) => ws.send(JSON.stringify(msg)),
		waitFor,
		close: () =>
			new Promise((resolve) => {
				if (ws.readyState === ws.CLOSED) return resolve();
				ws.once('close', () => resolve());
				ws.close();
			})
	};
}

/** A plausible window of a locked six-state oscillator; `lock` sets the lock quality. */
export function frame(seq: number, lock = 0.93, t0 = 1_796_000_000_000) {
	return {
		seq,
		t: t0 + seq * 1000,
		window_s: 1,
		shots: 2000,
		vacuum: 40,
		counts: [330, 325, 327, 326, 322, 330],
		lock,
		switches: 2,
		dwell_s: 0.98,
		escapes: 0,
		vacuum_s: 0.02,
		aux: { mxc_mK: 12.1 }
	};
}
