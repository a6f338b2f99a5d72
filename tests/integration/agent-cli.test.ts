// The real phasewarden-agent CLI against the real server: frames written to its stdin survive a
// kill -9 of the server mid-stream; after the restart every seq is stored exactly once.
import { spawn } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, expect, it } from 'vitest';
import { frame } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer } from './support/server';

const root = path.resolve(import.meta.dirname, '../..');
let server: RunningServer | undefined;
afterAll(async () => {
	await server?.stop();
});

async function until(what: string, check: () => Promise<boolean>, timeoutMs = 20_000) {
	const end = Date.now() + timeoutMs;
	while (!(await check())) {
		if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
		await new Promise((r) => setTimeout(r, 150));
	}
}

it('loses and duplicates nothing across a server kill -9 and restart', async () => {
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	const spool = path.join(mkdtempSync(path.join(os.tmpdir(), 'phasewarden-spool-')), 'run.ndjson');
	const agent = spawn(
		path.join(root, 'node_modules/.bin/tsx'),
		[
			'agent/cli.ts',
			'--url',
			server.wsUrl,
			'--token',
			seeded.token,
			'--run-key',
			'cli-run',
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
	let agentLog = '';
	agent.stdout!.on('data', (d) => (agentLog += d));
	agent.stderr!.on('data', (d) => (agentLog += d));
	const agentExit = new Promise<number | null>((resolve) => agent.once('exit', (code) => resolve(code)));
	const write = (from: number, to: number) => {
		for (let seq = from; seq <= to; seq++) agent.stdin!.write(JSON.stringify(frame(seq)) + '\n');
	};

	write(1, 120);
	let observer = await signIn(server, 'observer');
	const lastSeq = async () => {
		const { runs } = await (await observer('/api/runs')).json();
		return (runs.find((r: { key: string }) => r.key === 'cli-run')?.lastSeq ?? 0) as number;
	};
	await until('the first frames to be committed', async () => (await lastSeq()) >= 120);

	await server.kill9();
	write(121, 240); // written while the server is down: they wait in the spool
	server = await startServer(seeded.dataDir, server.port);
	observer = await signIn(server, 'observer');
	write(241, 300);
	agent.stdin!.end();
	expect(await agentExit, agentLog).toBe(0);

	const { runs } = await (await observer('/api/runs')).json();
	const run = runs.find((r: { key: string }) => r.key === 'cli-run');
	expect(run).toMatchObject({ status: 'ended', lastSeq: 300, frameCount: 300, gapCount: 0 });
	const { frames } = await (await observer(`/api/runs/${run.id}/frames?from=1&limit=5000`)).json();
	expect(frames.map((f: { seq: number }) => f.seq)).toEqual(Array.from({ length: 300 }, (_, i) => i + 1));
});
