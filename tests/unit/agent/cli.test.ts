// The agent as an operator runs it: a child process with real flags against a stand-in server.
// Exit codes and messages follow the brief: 0 after the run is ended, a clear "token refused" and a
// non-zero code on HTTP 401, and on SIGTERM the spool is kept for the next start.
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterEach, describe, expect, test } from 'vitest';
import { FakeServer, until } from './fake-server.ts';

const root = path.resolve(import.meta.dirname, '../../..');
// The agent runs with tsx; its loader is passed by absolute URL so the child may start in any directory.
const tsxLoader = pathToFileURL(path.join(root, 'node_modules/tsx/dist/loader.mjs')).href;
const cleanups: (() => Promise<void> | void)[] = [];
afterEach(async () => {
	while (cleanups.length) await cleanups.pop()!();
});

function tmpDir(): string {
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-cli-'));
	cleanups.push(() => fs.rmSync(dir, { recursive: true, force: true }));
	return dir;
}

function agent(args: string[], opts: { cwd: string; stdin?: string }) {
	const child = spawn(process.execPath, ['--import', tsxLoader, path.join(root, 'agent/cli.ts'), ...args], {
		cwd: opts.cwd,
		env: { ...process.env, NODE_OPTIONS: '' },
		stdio: ['pipe', 'pipe', 'pipe']
	});
	let stderr = '';
	child.stderr.on('data', (d) => (stderr += d));
	if (opts.stdin !== undefined) child.stdin.end(opts.stdin);
	const exit = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
	cleanups.push(() => {
		if (child.exitCode === null) child.kill('SIGKILL');
	});
	return { child, exit, stderr: () => stderr };
}

async function server(options: ConstructorParameters<typeof FakeServer>[0] = {}) {
	const s = new FakeServer(options);
	const port = await s.start();
	cleanups.push(() => s.crash());
	return { s, url: `ws://127.0.0.1:${port}/api/agent/stream` };
}

const frameLine = (seq: number, counts = [16, 16, 16, 16, 16, 16]) =>
	JSON.stringify({
		seq,
		t: 1_780_000_000_000 + seq * 1000,
		window_s: 1,
		shots: 100,
		vacuum: 4,
		counts,
		lock: 0.9,
		switches: 0,
		dwell_s: 0.96,
		escapes: 0,
		vacuum_s: 0.04
	});

describe('phasewarden-agent CLI', { timeout: 20_000 }, () => {
	test('--input FILE: bad lines reported by number and skipped, the rest sent, the run ended, exit 0', async () => {
		const { s, url } = await server();
		const dir = tmpDir();
		const lines = [frameLine(1), frameLine(2), frameLine(3), '{"seq": 4,', frameLine(4), frameLine(5, [1, 2, 3]), frameLine(6)];
		fs.writeFileSync(path.join(dir, 'run7.ndjson'), lines.join('\n') + '\n');
		const a = agent(['--url', url, '--token', 'tok', '--input', 'run7.ndjson'], { cwd: dir });
		expect(await a.exit).toBe(0);
		expect(a.stderr()).toMatch(/run7\.ndjson line 4: not valid JSON/);
		expect(a.stderr()).toMatch(/run7\.ndjson line 6: counts: expected 6 entries/);
		expect(s.committed).toEqual([1, 2, 3, 4, 6]);
		expect(s.ends).toEqual(['input finished']);
		// The default spool sits in the working directory, empty once everything is acknowledged.
		expect(fs.readFileSync(path.join(dir, '.phasewarden-agent/run7.spool.ndjson'), 'utf8')).toBe('');
	});

	test('--input -: frames from stdin', async () => {
		const { s, url } = await server();
		const a = agent(['--url', url, '--token', 'tok', '--input', '-', '--run-key', 'piped'], {
			cwd: tmpDir(),
			stdin: [1, 2, 3].map((n) => frameLine(n)).join('\n') + '\n'
		});
		expect(await a.exit).toBe(0);
		expect(s.committed).toEqual([1, 2, 3]);
		expect(s.ends).toHaveLength(1);
	});

	test('SIGINT while stdin is still open: stops reading and exits 0', async () => {
		const { s, url } = await server();
		const a = agent(['--url', url, '--token', 'tok', '--input', '-', '--run-key', 'open-pipe'], { cwd: tmpDir() });
		a.child.stdin.write(frameLine(1) + '\n' + frameLine(2) + '\n');
		await until(() => s.committed.length === 2, 'two frames committed', 15_000);
		a.child.kill('SIGINT');
		expect(await a.exit).toBe(0);
		expect(a.stderr()).toMatch(/SIGINT/);
		expect(s.ends).toEqual([]); // interrupted, not finished: the run stays open
	});

	test('HTTP 401: "token refused" and a non-zero exit, no endless retry', async () => {
		const { s, url } = await server({ refuseWith: 401 });
		const a = agent(['--url', url, '--token', 'revoked', '--simulate'], { cwd: tmpDir() });
		expect(await a.exit).toBe(1);
		expect(a.stderr()).toMatch(/token refused/);
		expect(s.upgradeAttempts).toBe(1);
	});

	test('SIGTERM: exits 0 and keeps the unacknowledged frames in the spool', async () => {
		const { s, url } = await server({ ackMode: 'none' });
		const dir = tmpDir();
		const a = agent(['--url', url, '--token', 'tok', '--simulate', '--speed', '20', '--run-key', 'night', '--shots', '100'], { cwd: dir });
		await until(() => s.received.length >= 5, 'frames at the server', 15_000);
		a.child.kill('SIGTERM');
		expect(await a.exit).toBe(0);
		expect(a.stderr()).toMatch(/kept in/);
		const spooled = fs.readFileSync(path.join(dir, '.phasewarden-agent/night.spool.ndjson'), 'utf8').trim().split('\n');
		expect(spooled.length).toBeGreaterThanOrEqual(s.received.length);
		expect(s.ends).toEqual([]);
	});
});
