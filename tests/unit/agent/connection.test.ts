// The agent against a stand-in server on a real WebSocket: resume after a server crash and after an
// agent crash, dropping frames the server refuses, fatal answers, heartbeat and batching.
// Expected behaviour throughout: wire protocol v1 as DESIGN.md ("Wire protocol v1") specifies it.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, test } from 'vitest';
import { MAX_FRAMES_PER_MESSAGE } from '../../../src/lib/protocol/index.ts';
import type { AgentConfig } from '../../../agent/args.ts';
import { createBackoff } from '../../../agent/backoff.ts';
import { AgentConnection, AgentFatalError } from '../../../agent/connection.ts';
import { runAgent } from '../../../agent/run.ts';
import { simulateFrames } from '../../../agent/simulate.ts';
import { Spool } from '../../../agent/spool.ts';
import { FakeServer, until } from './fake-server.ts';

const run = { key: 'bench-a', name: 'bench A', order: 3, states: 6, mode_GHz: 5 };
const fast = { batchIntervalMs: 10, heartbeatMs: 1000, pongTimeoutMs: 2000, welcomeTimeoutMs: 2000 };
const cleanups: (() => Promise<void> | void)[] = [];
afterEach(async () => {
	while (cleanups.length) await cleanups.pop()!();
});

function tmpSpool(): string {
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-agent-'));
	cleanups.push(() => fs.rmSync(dir, { recursive: true, force: true }));
	return path.join(dir, 'run.spool.ndjson');
}

function frames(count: number) {
	return [...simulateFrames({ seed: 11, startMs: 1.7e12, shots: 100, count })];
}

function connect(port: number, spool: Spool, extra: Partial<ConstructorParameters<typeof AgentConnection>[0]> = {}, log?: string[]) {
	const conn = new AgentConnection({
		url: `ws://127.0.0.1:${port}/api/agent/stream`,
		token: 'token-1',
		run,
		agent: 'test/0',
		spool,
		log: (l) => log?.push(l),
		backoff: createBackoff({ initialMs: 10, maxMs: 50 }),
		...fast,
		...extra
	});
	cleanups.push(() => conn.stop(0));
	return conn;
}

async function server(options: ConstructorParameters<typeof FakeServer>[0] = {}) {
	const s = new FakeServer(options);
	const port = await s.start();
	cleanups.push(() => s.crash());
	return { s, port };
}

const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, i) => a + i);

describe('resume without loss or duplicates', () => {
	test('server crashes mid-stream and restarts on the same port', async () => {
		const first = new FakeServer({ stopCommittingAfter: 100 });
		const port = await first.start();
		const N = 300;
		const config: AgentConfig = {
			url: `ws://127.0.0.1:${port}/api/agent/stream`,
			token: 'token-1',
			run,
			spoolPath: tmpSpool(),
			input: null,
			simulate: { window_s: 1, speed: 1200, seed: 5, loseLockAtMin: 1, lockLossMin: 1.5, durationMin: N / 60, shots: 100, iqBins: 0 },
			sendEnd: true
		};
		const log: string[] = [];
		const done = runAgent(config, {
			log: (l) => log.push(l),
			spoolSync: false,
			connection: { ...fast, backoff: createBackoff({ initialMs: 20, maxMs: 100 }) }
		});
		await until(() => first.received.length >= 150, 'the first server to receive 150 frames');
		await first.crash();
		// Frames received but not committed die with the first server; the agent must send them again.
		const committedBefore = [...first.committed];
		expect(committedBefore).toEqual(range(1, committedBefore.length));
		expect(first.received.length).toBeGreaterThan(committedBefore.length);
		await new Promise((r) => setTimeout(r, 100));

		const second = new FakeServer({ port, committed: committedBefore });
		await second.start();
		cleanups.push(() => second.crash());
		await expect(done).resolves.toBe('ended');

		// Nothing the first server committed (welcome.lastSeq) is sent again...
		expect(second.received.every((seq) => seq > committedBefore.length)).toBe(true);
		// ...and the union of what both committed is exactly 1..N, each once.
		expect(second.committed).toEqual(range(1, N));
		expect(second.ends).toEqual(['simulation finished']);
		expect(log.some((l) => l.startsWith('disconnected'))).toBe(true);
		expect(fs.readFileSync(config.spoolPath, 'utf8')).toBe('');
	});

	test('agent crashes with frames unacknowledged; a new process resends them from the spool', async () => {
		const spoolPath = tmpSpool();
		const { s: silent, port } = await server({ ackMode: 'none' });
		const spool1 = Spool.open(spoolPath, { sync: false });
		const conn1 = connect(port, spool1);
		conn1.start();
		await conn1.whenWelcomed();
		conn1.enqueue(frames(50));
		await until(() => silent.received.length === 50, '50 frames at the silent server');
		// The crash: the process is gone without compacting or closing its spool.
		await conn1.stop(0);
		await silent.crash();

		// The server had committed 20 of them; its acks never reached the agent.
		const restarted = new FakeServer({ port, committed: range(1, 20) });
		await restarted.start();
		cleanups.push(() => restarted.crash());
		const spool2 = Spool.open(spoolPath, { sync: false });
		expect(spool2.size).toBe(50);
		const conn2 = connect(port, spool2);
		conn2.start();
		await conn2.whenDrained();
		expect(restarted.received).toEqual(range(21, 50));
		expect(restarted.committed).toEqual(range(1, 50));
		expect(spool2.size).toBe(0);
	});
});

describe('server errors', () => {
	test('invalid_frame drops that frame from the spool, on disk too, and the rest flow', async () => {
		const spoolPath = tmpSpool();
		const { s, port } = await server({ ackMode: 'none', rejectSeqs: [5] });
		const spool = Spool.open(spoolPath, { sync: false });
		const log: string[] = [];
		const conn = connect(port, spool, {}, log);
		conn.start();
		await conn.whenWelcomed();
		conn.enqueue(frames(10));
		await until(() => !spool.has(5), 'seq 5 to leave the spool');
		expect(spool.size).toBe(9);
		expect(
			Spool.open(spoolPath)
				.pending()
				.map((f) => f.seq)
		).toEqual([1, 2, 3, 4, 6, 7, 8, 9, 10]);
		expect(s.committed).toEqual([1, 2, 3, 4, 6, 7, 8, 9, 10]);
		expect(log.some((l) => l.includes('invalid_frame (seq 5)'))).toBe(true);
	});

	test('HTTP 401 on the upgrade is fatal and not retried', async () => {
		const { s, port } = await server({ refuseWith: 401 });
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }));
		conn.start();
		const err = await conn.failed.catch((e) => e);
		expect(err).toBeInstanceOf(AgentFatalError);
		expect(err.code).toBe('token_refused');
		expect(err.message).toMatch(/token refused.*401/);
		await new Promise((r) => setTimeout(r, 150)); // several backoff periods (10…50 ms)
		expect(s.upgradeAttempts).toBe(1);
	});

	test.each(['run_ended', 'unauthorized', 'protocol_unsupported'])('%s in answer to hello is fatal', async (code) => {
		const { s, port } = await server({ helloError: { code, message: `test says ${code}` } });
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }));
		conn.start();
		const err = await conn.failed.catch((e) => e);
		expect(err).toBeInstanceOf(AgentFatalError);
		expect(err.code).toBe(code);
		await new Promise((r) => setTimeout(r, 150));
		expect(s.connections).toBe(1);
	});

	test('close code 4000 (a newer connection took the run) stops the agent instead of fighting it', async () => {
		const { s, port } = await server({ closeAfterWelcome: 4000 });
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }));
		conn.start();
		const err = await conn.failed.catch((e) => e);
		expect(err.code).toBe('replaced');
		expect(err.message).toMatch(/second agent/);
		await new Promise((r) => setTimeout(r, 150));
		expect(s.connections).toBe(1);
	});
});

describe('link upkeep', () => {
	test('no pong within the timeout: the agent drops the link and reconnects', async () => {
		const { s, port } = await server({ autoPong: false });
		const log: string[] = [];
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }), { heartbeatMs: 20, pongTimeoutMs: 60 }, log);
		conn.start();
		await until(() => s.connections >= 2, 'a second connection');
		expect(log.some((l) => l.startsWith('no pong'))).toBe(true);
		expect(conn.welcomes).toBeGreaterThanOrEqual(1);
	});

	test('a backlog goes out in full batches of at most 500 frames', async () => {
		const { s, port } = await server();
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }));
		conn.start();
		await conn.whenWelcomed();
		conn.enqueue(frames(1200));
		await conn.whenDrained();
		const sizes = s.messages.filter((m) => m.type === 'frames').map((m) => m.frames);
		expect(sizes).toEqual([MAX_FRAMES_PER_MESSAGE, MAX_FRAMES_PER_MESSAGE, 200]);
		expect(s.committed).toEqual(range(1, 1200));
	});

	test('batches stay under the byte limit', async () => {
		const { s, port } = await server();
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }), { maxBatchBytes: 4000 });
		conn.start();
		await conn.whenWelcomed();
		conn.enqueue(frames(60));
		await conn.whenDrained();
		const batches = s.messages.filter((m) => m.type === 'frames');
		expect(batches.length).toBeGreaterThan(1);
		for (const m of batches) expect(m.bytes).toBeLessThanOrEqual(4000);
		expect(s.committed).toEqual(range(1, 60));
	});

	test('frames that trickle in are gathered, not sent one message each', async () => {
		const { s, port } = await server();
		const conn = connect(port, Spool.open(tmpSpool(), { sync: false }), { batchIntervalMs: 100 });
		conn.start();
		await conn.whenWelcomed();
		const all = frames(40);
		const start = Date.now();
		for (const f of all) {
			conn.enqueue([f]);
			await new Promise((r) => setTimeout(r, 5));
		}
		await conn.whenDrained();
		const elapsed = Date.now() - start;
		const batches = s.messages.filter((m) => m.type === 'frames').length;
		// At most one message per interval, plus the first and the last.
		expect(batches).toBeLessThanOrEqual(Math.ceil(elapsed / 100) + 2);
		expect(batches).toBeLessThan(all.length);
		expect(s.committed).toEqual(range(1, 40));
	});
});
