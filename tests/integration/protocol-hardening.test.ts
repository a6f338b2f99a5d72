// Input the schema used to let through but the database could not hold, and protocol misuse that
// used to end in a 1011 or a silent close: each now gets a named error over the real server, and
// the run keeps its stored frames and goes on.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { MAX_MESSAGE_BYTES, type ServerMessage } from '../../src/lib/protocol/messages';
import { RUN, connect, frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

/** A socket that sends exactly what the test says (no automatic hello) and records answers and the close. */
async function rawSocket() {
	const ws = await connect(server.wsUrl, seeded.token);
	const events: (ServerMessage | { type: 'close'; code: number })[] = [];
	ws.on('message', (data) => events.push(JSON.parse(String(data)) as ServerMessage));
	const closed = new Promise<number>((resolve) =>
		ws.on('close', (code) => {
			events.push({ type: 'close', code });
			resolve(code);
		})
	);
	const waitFor = async (pred: (e: (typeof events)[number]) => boolean, what: string) => {
		const until = Date.now() + 10_000;
		for (;;) {
			const found = events.find(pred);
			if (found) return found;
			if (Date.now() > until) throw new Error(`no ${what}; got ${JSON.stringify(events)}`);
			await new Promise((r) => setTimeout(r, 20));
		}
	};
	return { ws, events, closed, waitFor, send: (msg: unknown) => ws.send(JSON.stringify(msg)) };
}

const hello = (run: object) => ({ type: 'hello', protocol: 1, agent: 'it-agent/1', run });

async function storedSeqs(runId: string): Promise<number[]> {
	const observer = await signIn(server, 'observer');
	const res = await observer(`/api/runs/${runId}/frames?from=1&to=1000`);
	expect(res.status).toBe(200);
	return (await res.json()).frames.map((f: { seq: number }) => f.seq);
}

const isError = (code: string) => (m: { type: string; code?: unknown }) => m.type === 'error' && m.code === code;

describe('numbers the columns cannot hold', () => {
	it('names seq = 2^31 and t = 1e19, stores the frames around them and keeps the link', async () => {
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'bounds-run' });
		const hugeSeq = { ...frame(2), seq: 2 ** 31 };
		const farFuture = { ...frame(4), t: 1e19 };
		agent.send({ type: 'frames', frames: [frame(1), hugeSeq, frame(3), farFuture, frame(5)] });
		const seqError = await agent.waitFor((m) => m.type === 'error' && m.seq === 2 ** 31);
		expect(seqError).toMatchObject({ code: 'invalid_frame' });
		expect((seqError as { message: string }).message).toMatch(/^frames\[1\]\.seq: /);
		const tError = await agent.waitFor((m) => m.type === 'error' && m.seq === 4);
		expect(tError).toMatchObject({ code: 'invalid_frame' });
		expect((tError as { message: string }).message).toMatch(/^frames\[3\]\.t: /);
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 5);
		expect(await storedSeqs(agent.welcome.run)).toEqual([1, 3, 5]);

		// The link is still open and the run goes on.
		expect(agent.ws.readyState).toBe(WebSocket.OPEN);
		agent.send({ type: 'frames', frames: [frame(6), frame(7)] });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 7);
		expect(await storedSeqs(agent.welcome.run)).toEqual([1, 3, 5, 6, 7]);
		expect(agent.messages.some((m) => m.type === 'error' && m.code !== 'invalid_frame')).toBe(false);
		await agent.close();
	});
});

describe('a second hello', () => {
	it('sent right behind the first, before the welcome, gets invalid_message and the first run works', async () => {
		const sock = await rawSocket();
		const run = { ...RUN, key: 'double-hello-run' };
		sock.send(hello(run));
		sock.send(hello(run));
		const welcome = (await sock.waitFor((e) => e.type === 'welcome', 'welcome')) as Extract<ServerMessage, { type: 'welcome' }>;
		const refused = await sock.waitFor(isError('invalid_message'), 'invalid_message');
		expect((refused as { message: string }).message).toMatch(/^hello: .*already sent hello/);

		sock.send({ type: 'frames', frames: [frame(1), frame(2), frame(3)] });
		await sock.waitFor((e) => e.type === 'ack' && e.seq === 3, 'ack 3');
		expect(sock.events.filter((e) => e.type === 'welcome')).toHaveLength(1);
		expect(sock.events.filter((e) => e.type === 'error')).toHaveLength(1);
		expect(await storedSeqs(welcome.run)).toEqual([1, 2, 3]);
		expect(sock.ws.readyState).toBe(WebSocket.OPEN);
		sock.ws.close();
		await sock.closed;
	});
});

describe('a message over 4 MiB', () => {
	it('gets too_large before the close with 1009, and the run resumes intact', async () => {
		const key = 'too-large-run';
		const first = await startAgent(server.wsUrl, seeded.token, { ...RUN, key });
		first.send({ type: 'frames', frames: Array.from({ length: 10 }, (_, i) => frame(i + 1)) });
		await first.waitFor((m) => m.type === 'ack' && m.seq === 10);
		const runId = first.welcome.run;

		const events: string[] = [];
		first.ws.on('message', (data) => events.push(`message:${JSON.parse(String(data)).code ?? ''}`));
		const closeCode = new Promise<number>((resolve) => first.ws.on('close', (code) => (events.push('close'), resolve(code))));
		// 5 MiB: valid JSON of frames padded past the limit, so only its size is wrong.
		const padding = ' '.repeat(5 * 1024 * 1024);
		const big = `{"type":"frames","frames":[${JSON.stringify(frame(11))}]${padding}}`;
		expect(big.length).toBeGreaterThan(MAX_MESSAGE_BYTES);
		first.ws.send(big);
		expect(await closeCode).toBe(1009);
		expect(events).toEqual(['message:too_large', 'close']);
		const tooLarge = first.messages.find((m) => m.type === 'error');
		expect(tooLarge).toMatchObject({ code: 'too_large' });
		expect((tooLarge as { message: string }).message).toContain(String(MAX_MESSAGE_BYTES));

		const second = await startAgent(server.wsUrl, seeded.token, { ...RUN, key });
		expect(second.welcome).toMatchObject({ run: runId, lastSeq: 10 });
		expect(await storedSeqs(runId)).toEqual(Array.from({ length: 10 }, (_, i) => i + 1));
		second.send({ type: 'frames', frames: [frame(11), frame(12)] });
		await second.waitFor((m) => m.type === 'ack' && m.seq === 12);
		expect(await storedSeqs(runId)).toEqual(Array.from({ length: 12 }, (_, i) => i + 1));
		await second.close();
	});
});

describe('text the database cannot store', () => {
	it('a NUL in run.name or a lone surrogate gets invalid_message naming the field, never a 1011', async () => {
		const sock = await rawSocket();
		const run = { ...RUN, key: 'nul-name-run' };
		sock.send(hello({ ...run, name: 'Run\u00007' }));
		const nul = await sock.waitFor(isError('invalid_message'), 'invalid_message');
		expect((nul as { message: string }).message).toBe('run.name: must not contain NUL (U+0000)');
		// JSON.stringify writes a lone surrogate as the escape "\ud800", which JSON.parse on the server keeps.
		const loneSurrogate = JSON.stringify(hello({ ...run, name: 'Run \ud800' }));
		expect(loneSurrogate).toContain('\\ud800');
		sock.ws.send(loneSurrogate);
		await sock.waitFor((e) => e.type === 'error' && /unpaired surrogate/.test((e as { message: string }).message), 'surrogate error');
		expect(sock.events.filter((e) => e.type === 'error').map((e) => (e as { message: string }).message)).toEqual([
			'run.name: must not contain NUL (U+0000)',
			'run.name: must not contain an unpaired surrogate'
		]);

		// The refused hellos did not count: the same connection can still start the run.
		sock.send(hello({ ...run, name: 'Run 7 🧊' }));
		const welcome = (await sock.waitFor((e) => e.type === 'welcome', 'welcome')) as Extract<ServerMessage, { type: 'welcome' }>;
		sock.send({ type: 'end', reason: 'stopped\u0000' });
		await sock.waitFor(
			(e) => e.type === 'error' && /^reason: must not contain NUL/.test((e as { message: string }).message),
			'end.reason error'
		);
		sock.send({ type: 'frames', frames: [frame(1)] });
		await sock.waitFor((e) => e.type === 'ack' && e.seq === 1, 'ack 1');
		expect(await storedSeqs(welcome.run)).toEqual([1]);
		expect(sock.events.some((e) => e.type === 'close')).toBe(false);
		expect(server.output()).not.toMatch(/ingest: message failed/);
		sock.ws.close();
		await sock.closed;
	});
});
