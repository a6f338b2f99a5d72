// Two app instances on two ports sharing one PostgreSQL server (issue 11, item 2): an agent that
// reconnects to the other instance resumes without loss or duplicates (the run's writer lease is
// handed over), a person signed in on one instance sees live the frames ingested on the other
// (LISTEN/NOTIFY), and background work has exactly one leader, which the survivor becomes when the
// leader is killed. Runs only in the suite's server mode (PHASEWARDEN_TEST_PG_URL, see .ci/run):
// the embedded database is one process by design.
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import WebSocket from 'ws';
import { afterEach, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent, type TestAgent } from './support/agent-socket';
import { poll } from './support/poll';
import { PASSWORD, people, seedDataDir, startServer, testPgUrl, type RunningServer, type Seeded } from './support/server';

const root = path.resolve(import.meta.dirname, '../..');
const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

const WHY_SKIPPED = 'needs a PostgreSQL server: set PHASEWARDEN_TEST_PG_URL (see .ci/postgres-cluster.sh)';
if (!testPgUrl) console.warn(`two-instances.test.ts skipped: ${WHY_SKIPPED}`);

/** A second data folder pointing at the same database, as a second host would have. */
function secondFolder(seeded: Seeded): string {
	const dir = mkdtempSync(path.join(os.tmpdir(), 'phasewarden-it-b-'));
	writeFileSync(path.join(dir, 'test-database-url'), seeded.databaseUrl!);
	return dir;
}

async function startPair(seeded: Seeded, env: Record<string, string> = {}): Promise<[RunningServer, RunningServer]> {
	const a = await startServer(seeded.dataDir, undefined, env);
	cleanup.push(() => a.stop());
	const b = await startServer(secondFolder(seeded), undefined, env);
	cleanup.push(() => b.stop());
	return [a, b];
}

/** The session cookie of a sign-in on `server`. */
async function sessionCookie(server: RunningServer, who: keyof typeof people): Promise<string> {
	const res = await fetch(`${server.url}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: server.url },
		body: JSON.stringify({ email: people[who].email, password: PASSWORD })
	});
	expect(res.status).toBe(200);
	return res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
}

/** Server-sent events of `url`, parsed as they arrive. */
async function listen(url: string, cookie: string) {
	const controller = new AbortController();
	const res = await fetch(url, { headers: { cookie }, signal: controller.signal });
	expect(res.status).toBe(200);
	const events: { type: string; data: any }[] = [];
	void (async () => {
		const decoder = new TextDecoder();
		let buffer = '';
		try {
			for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
				buffer += decoder.decode(chunk, { stream: true });
				let end;
				while ((end = buffer.indexOf('\n\n')) >= 0) {
					const block = buffer.slice(0, end);
					buffer = buffer.slice(end + 2);
					const type = /^event: (.*)$/m.exec(block)?.[1];
					const data = /^data: (.*)$/m.exec(block)?.[1];
					if (type && data) events.push({ type, data: JSON.parse(data) });
				}
			}
		} catch {
			/* aborted */
		}
	})();
	cleanup.push(async () => controller.abort());
	return events;
}

/** Every stored seq of a run and how often it is stored, read straight from the database. */
async function storedSeqs(databaseUrl: string, runId: string): Promise<Map<number, number>> {
	const client = new pg.Client({ connectionString: databaseUrl });
	await client.connect();
	try {
		const { rows } = await client.query<{ seq: number; n: string }>(
			'SELECT seq, count(*) AS n FROM frames WHERE run_id = $1 GROUP BY seq',
			[runId]
		);
		return new Map(rows.map((r) => [Number(r.seq), Number(r.n)]));
	} finally {
		await client.end();
	}
}

/**
 * A TCP stand-in for the reverse proxy: sends new connections to one instance, and on `moveTo`
 * to another, cutting the agent's side of every open connection while leaving the instance's side
 * open, as a dropped link does (the old instance sees nothing until its heartbeat).
 */
async function switchingProxy(firstPort: number) {
	let target = firstPort;
	const clientSides = new Set<net.Socket>();
	const upstreams = new Set<net.Socket>();
	const server = net.createServer((client) => {
		const upstream = net.connect(target, '127.0.0.1');
		clientSides.add(client);
		upstreams.add(upstream);
		client.pipe(upstream);
		upstream.pipe(client);
		client.on('error', () => {});
		upstream.on('error', () => client.destroy());
		client.on('close', () => clientSides.delete(client));
	});
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const port = (server.address() as net.AddressInfo).port;
	const close = async () => {
		for (const s of [...clientSides, ...upstreams]) s.destroy();
		await new Promise((r) => server.close(r));
	};
	cleanup.push(close);
	return {
		wsUrl: `ws://127.0.0.1:${port}/api/agent/stream`,
		moveTo(port: number) {
			target = port;
			for (const c of clientSides) {
				c.unpipe();
				c.destroy();
			}
		}
	};
}

const range = (from: number, to: number) => Array.from({ length: to - from + 1 }, (_, i) => from + i);

function closeCode(ws: WebSocket): Promise<number> {
	return new Promise((resolve) => {
		if (ws.readyState === ws.CLOSED) return resolve(-1);
		ws.once('close', (code) => resolve(code));
	});
}

describe.skipIf(!testPgUrl)(`two instances on one PostgreSQL server${testPgUrl ? '' : ` (skipped: ${WHY_SKIPPED})`}`, () => {
	it('hands a run to the instance the agent reconnects to, with every seq stored once, and shows it live on the other', async () => {
		const seeded = await seedDataDir();
		const [a, b] = await startPair(seeded);

		// Signed in on A, the same session is good on B (one auth secret, sessions in the database).
		const cookie = await sessionCookie(a, 'observer');

		// The agent opens its run on A; a page on B follows that run.
		const run = { ...RUN, key: 'two-instances' };
		const first: TestAgent = await startAgent(a.wsUrl, seeded.token, run);
		expect(first.welcome.lastSeq).toBe(0);
		const seenOnB = await listen(`${b.url}/api/runs/${first.welcome.run}/events`, cookie);

		// It streams 1…100 to A and has them acknowledged.
		for (let s = 1; s <= 100; s += 10) first.send({ type: 'frames', frames: range(s, s + 9).map((q) => frame(q)) });
		await first.waitFor((m) => m.type === 'ack' && m.seq === 100, 30_000);
		const runId = first.welcome.run;

		// Frames ingested on A reach the page's event stream on B.
		await poll('frames 1…100 over B’s event stream', async () => {
			const seqs = new Set(seenOnB.filter((e) => e.type === 'frames').flatMap((e) => e.data.frames.map((f: { seq: number }) => f.seq)));
			return range(1, 100).every((s) => seqs.has(s));
		});

		// 101…120 go to A, and before A has answered, the agent is on B (A never saw its link drop).
		first.send({ type: 'frames', frames: range(101, 120).map((q) => frame(q)) });
		const ackedOnA = first.lastAck();
		const closedOnA = closeCode(first.ws);
		const second = await startAgent(b.wsUrl, seeded.token, run);
		expect(second.welcome.run).toBe(runId);
		// Nothing A acknowledged is missing from what B says it has, and B has nothing it was not sent.
		const lastSeq = second.welcome.lastSeq;
		expect(lastSeq).toBeGreaterThanOrEqual(Math.max(100, ackedOnA));
		expect(lastSeq).toBeLessThanOrEqual(120);
		// A let go of the run and told its socket so.
		expect(await closedOnA).toBe(4002);

		// The agent resends everything above lastSeq, as the real agent does, and goes on to 200.
		for (let s = lastSeq + 1; s <= 200; s += 10)
			second.send({ type: 'frames', frames: range(s, Math.min(s + 9, 200)).map((q) => frame(q)) });
		await second.waitFor((m) => m.type === 'ack' && m.seq === 200, 30_000);
		await second.close();

		const stored = await storedSeqs(seeded.databaseUrl!, runId);
		expect([...stored.keys()].sort((x, y) => x - y)).toEqual(range(1, 200));
		expect([...stored.values()].every((n) => n === 1)).toBe(true);
		// B's own count agrees with the table.
		const detail = await (await fetch(`${b.url}/api/runs/${runId}`, { headers: { cookie } })).json();
		expect(detail.run.frameCount).toBe(200);
		expect(detail.run.lastSeq).toBe(200);
	}, 120_000);

	it('lets the real agent, cut from one instance and reconnected through the proxy to the other, store every frame once', async () => {
		const seeded = await seedDataDir();
		const [a, b] = await startPair(seeded);
		const proxy = await switchingProxy(a.port);
		const spool = path.join(mkdtempSync(path.join(os.tmpdir(), 'phasewarden-spool-')), 'run.ndjson');
		const agent = spawn(
			path.join(root, 'node_modules/.bin/tsx'),
			[
				'agent/cli.ts',
				'--url',
				proxy.wsUrl,
				'--token',
				seeded.token,
				'--run-key',
				'proxy-run',
				'--order',
				'3',
				'--states',
				'6',
				'--input',
				'-',
				'--spool',
				spool
			],
			{ cwd: root, stdio: ['pipe', 'pipe', 'pipe'] }
		);
		cleanup.push(async () => agent.kill('SIGKILL'));
		let agentLog = '';
		agent.stdout!.on('data', (d) => (agentLog += d));
		agent.stderr!.on('data', (d) => (agentLog += d));
		const agentExit = new Promise<number | null>((resolve) => agent.once('exit', (code) => resolve(code)));
		const write = (from: number, to: number) => {
			for (let seq = from; seq <= to; seq++) agent.stdin!.write(JSON.stringify(frame(seq)) + '\n');
		};
		const client = new pg.Client({ connectionString: seeded.databaseUrl });
		await client.connect();
		cleanup.push(() => client.end());
		const storedCount = async () =>
			Number((await client.query("SELECT count(*) AS n FROM frames f JOIN runs r ON r.id = f.run_id WHERE r.key = 'proxy-run'")).rows[0].n);

		write(1, 150);
		await poll('the first frames on A', async () => (await storedCount()) >= 150);
		write(151, 200);
		proxy.moveTo(b.port);
		write(201, 300);
		agent.stdin!.end();
		expect(await agentExit, agentLog).toBe(0);

		const { rows } = await client.query("SELECT id, status FROM runs WHERE key = 'proxy-run'");
		expect(rows[0].status).toBe('ended');
		const stored = await storedSeqs(seeded.databaseUrl!, rows[0].id);
		expect([...stored.keys()].sort((x, y) => x - y)).toEqual(range(1, 300));
		expect([...stored.values()].every((n) => n === 1)).toBe(true);
		// The link really was cut, and no writer ever found its frames stored by another.
		expect(agentLog).toMatch(/reconnecting/);
		expect(b.output() + a.output()).not.toMatch(/believed missing were already stored/);
	}, 120_000);

	it('has exactly one leader for background work, and the other takes over when it is killed', async () => {
		const seeded = await seedDataDir();
		const [a, b] = await startPair(seeded);
		const leaderOf = async (s: RunningServer) => ((await (await fetch(`${s.url}/api/health`)).json()) as { leader: boolean }).leader;
		const [leaderA, leaderB] = await Promise.all([leaderOf(a), leaderOf(b)]);
		expect([leaderA, leaderB].filter(Boolean)).toHaveLength(1);
		const [leader, follower] = leaderA ? [a, b] : [b, a];
		await leader.kill9();
		// The database drops the dead session's advisory lock; the follower retries every 3 s.
		await poll('the follower to lead', () => leaderOf(follower), 20_000);
		expect(follower.output()).toMatch(/is the leader/);
	}, 60_000);

	it('fires an escalation step once, from the instance that took over leadership', async () => {
		const seeded = await seedDataDir();
		const T0 = Date.parse('2026-03-18T12:00:00Z');
		const MINUTE = 60_000;
		// Both instances check every half second, so a step checked by both would be seen twice.
		const [a, b] = await startPair(seeded, { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_ESCALATION_POLL_S: '0.5' });
		const leaderOf = async (s: RunningServer) => ((await (await fetch(`${s.url}/api/health`)).json()) as { leader: boolean }).leader;
		const [leader, follower] = (await leaderOf(a)) ? [a, b] : [b, a];
		const adminOn = async (s: RunningServer) => {
			const cookie = await sessionCookie(s, 'admin');
			return (p: string, init: RequestInit = {}) =>
				fetch(`${s.url}${p}`, { ...init, headers: { origin: s.url, 'content-type': 'application/json', cookie } });
		};
		const setClock = async (s: RunningServer, now_ms: number) => {
			const res = await (await adminOn(s))('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms, tick: false }) });
			expect(res.status).toBe(200);
		};
		await setClock(leader, T0);
		await setClock(follower, T0);

		// A lock loss on the follower: with no rota, every operator and admin is paged at step 0.
		const agent = await startAgent(follower.wsUrl, seeded.token, { ...RUN, key: 'escalate-once' });
		agent.send({ type: 'frames', frames: range(1, 22).map((q) => frame(q, q > 10 ? 0.15 : 0.93)) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 22);
		await agent.close();
		const admin = await adminOn(follower);
		const alerts = async () =>
			((await (await admin('/api/deliveries?limit=200&channel=email')).json()).deliveries as { kind: string; incidentId: string }[]).filter(
				(d) => d.kind === 'alert'
			);
		const first = await poll('the step-0 pages', async () => ((await alerts()).length >= 2 ? await alerts() : null));
		expect(first).toHaveLength(2);

		// The leader dies; ten minutes on (on the survivor's clock) the survivor's own timer pages step 1.
		await leader.kill9();
		await poll('the follower to lead', () => leaderOf(follower), 20_000);
		await setClock(follower, T0 + 10 * MINUTE);
		await poll('the step-1 pages', async () => ((await alerts()).length >= 4 ? true : null));
		// Many more checks pass: the step is not paged again.
		await new Promise((r) => setTimeout(r, 3000));
		expect(await alerts()).toHaveLength(4);
		const head = first[0].incidentId;
		const events = (await (await admin(`/api/incidents/${head}`)).json()).events as { action: string }[];
		expect(events.filter((e) => e.action === 'escalated')).toHaveLength(1);
	}, 120_000);
});
