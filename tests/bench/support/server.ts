// Starts the real production server (build/ + src/bin/serve.js) on a free port, signs in, and
// reads a process's resident memory. Run `npm run build` first: the benchmarks time the bundle.
import { spawn, type ChildProcess } from 'node:child_process';
import { SERVER_NODE_FLAGS } from '../../../src/bin/server-flags.js';
import { createWriteStream, existsSync, readFileSync } from 'node:fs';
import { createServer } from 'node:net';
import path from 'node:path';
import { AUTH_SECRET, OBSERVER, repoRoot } from './seed';

export interface RunningServer {
	url: string;
	wsUrl: string;
	pid: number;
	process: ChildProcess;
	output: () => string;
	stop(): Promise<void>;
}

export function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.once('error', reject);
		s.listen(0, '127.0.0.1', () => {
			const { port } = s.address() as { port: number };
			s.close(() => resolve(port));
		});
	});
}

/**
 * Maintenance (VACUUM + CHECKPOINT) period for benchmarks that read the folder's size, so their
 * readings see its effect; the others leave the server's default period.
 */
export const MAINTENANCE_S = 5;

export async function startAppServer(dataDir: string, env: Record<string, string> = {}): Promise<RunningServer> {
	if (!existsSync(path.join(repoRoot, 'build/handler.js'))) throw new Error('build/handler.js is missing: run `npm run build` first');
	const port = await freePort();
	const url = `http://127.0.0.1:${port}`;
	let log = '';
	// BENCH_APP_NODE_ARGS="--cpu-prof --cpu-prof-dir=…" profiles the server under a benchmark's load.
	const nodeArgs = process.env.BENCH_APP_NODE_ARGS?.split(' ').filter(Boolean) ?? [];
	const child = spawn(process.execPath, [...SERVER_NODE_FLAGS, ...nodeArgs, path.join(repoRoot, 'src/bin/serve.js')], {
		cwd: repoRoot,
		env: {
			...process.env,
			NODE_ENV: 'production',
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: url,
			PHASEWARDEN_DATA: dataDir,
			BETTER_AUTH_SECRET: AUTH_SECRET,
			...env
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	// BENCH_APP_LOG=<file> keeps the server's whole output (say with BENCH_APP_NODE_ARGS=--trace-gc).
	const keep = process.env.BENCH_APP_LOG ? createWriteStream(process.env.BENCH_APP_LOG) : null;
	const append = (d: Buffer) => {
		log = (log + d).slice(-20_000);
		keep?.write(d);
	};
	child.stdout!.on('data', append);
	child.stderr!.on('data', append);
	const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
	await waitUntil(
		child,
		() => log,
		async () => (await fetch(`${url}/api/health`)).ok,
		'app server'
	);
	return {
		url,
		wsUrl: `ws://127.0.0.1:${port}/api/agent/stream`,
		pid: child.pid!,
		process: child,
		output: () => log,
		async stop() {
			if (child.exitCode === null) child.kill('SIGTERM');
			await exited;
		}
	};
}

/** Polls `ready` until it answers true; fails with the child's output if it exits or takes 60 s. */
export async function waitUntil(child: ChildProcess, output: () => string, ready: () => Promise<boolean>, what: string) {
	for (let i = 0; ; i++) {
		if (child.exitCode !== null) throw new Error(`${what} exited during start-up:\n${output()}`);
		if (i > 600) throw new Error(`${what} did not start within 60 s:\n${output()}`);
		try {
			if (await ready()) return;
		} catch {
			/* not listening yet */
		}
		await new Promise((r) => setTimeout(r, 100));
	}
}

/** Signs in through better-auth's own endpoint; returns the session cookie and a fetch that carries it. */
export async function signIn(server: Pick<RunningServer, 'url'>) {
	const res = await fetch(`${server.url}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: server.url },
		body: JSON.stringify({ email: OBSERVER.email, password: OBSERVER.password })
	});
	if (!res.ok) throw new Error(`sign-in failed: ${res.status} ${await res.text()}`);
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
	const authedFetch = (pathname: string, init: RequestInit = {}) =>
		fetch(`${server.url}${pathname}`, {
			...init,
			headers: { origin: server.url, 'content-type': 'application/json', ...(init.headers ?? {}), cookie }
		});
	return { cookie, fetch: authedFetch };
}

/** Resident set size of a process in MB, from /proc/<pid>/status (Linux). */
export function rssMB(pid: number): number {
	const status = readFileSync(`/proc/${pid}/status`, 'utf8');
	const match = /^VmRSS:\s+(\d+)\s+kB/m.exec(status);
	if (!match) throw new Error(`no VmRSS line in /proc/${pid}/status`);
	return Number(match[1]) / 1024;
}
