// Starts the real production server (build/ + src/bin/serve.js) on a free port with a fresh PGlite
// directory and the mail catcher, seeded with a setup, an agent token and one person per role.
// With PHASEWARDEN_TEST_PG_URL (a PostgreSQL server's admin URL, see .ci/postgres-cluster.sh) every
// test gets a fresh database on that server instead, copied from a seeded template database; its
// URL is kept in the test's data folder, so tests start servers the same way in both modes.
import { spawn, type ChildProcess } from 'node:child_process';
import { SERVER_NODE_FLAGS } from '../../../src/bin/server-flags.js';
import { cpSync, existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { inject } from 'vitest';
import { addUser } from '../../../src/lib/server/auth/users';
import { createAuth } from '../../../src/lib/server/auth/options';
import { openConfiguredDatabase } from '../../../src/lib/server/db';
import { cloneDatabase, createDatabase } from './postgres';
import { createSetup } from '../../../src/lib/server/setups/service';
import { createAgentToken } from '../../../src/lib/server/setups/tokens';

const root = path.resolve(import.meta.dirname, '../../..');
const SECRET = 'integration-test-secret-not-for-production';
export const PASSWORD = 'test-password-1';

export const people = {
	admin: { email: 'admin@lab.test', name: 'Test Admin', role: 'admin' as const },
	operator: { email: 'operator@lab.test', name: 'Test Operator', role: 'operator' as const },
	observer: { email: 'observer@lab.test', name: 'Test Observer', role: 'observer' as const }
};

export interface Seeded {
	dataDir: string;
	setupId: string;
	token: string;
	/** The test's own database on the PostgreSQL server, in server mode. */
	databaseUrl?: string;
}

/** Server mode: the PostgreSQL server the tests run against (an admin URL), else undefined. */
export const testPgUrl = process.env.PHASEWARDEN_TEST_PG_URL || undefined;
const DATABASE_URL_FILE = 'test-database-url';

/** The database URL a test's data folder is paired with (server mode). */
export function databaseUrlOf(dataDir: string): string | undefined {
	const file = path.join(dataDir, DATABASE_URL_FILE);
	return existsSync(file) ? readFileSync(file, 'utf8').trim() : undefined;
}

/** A fresh copy of the template: people, one period-tripling setup and an agent token. */
export async function seedDataDir(): Promise<Seeded> {
	const template = inject('phasewardenTemplate');
	const dataDir = mkdtempSync(path.join(os.tmpdir(), 'phasewarden-it-'));
	cpSync(template.dataDir, dataDir, { recursive: true });
	if (!template.databaseUrl) return { ...template, dataDir };
	const databaseUrl = await cloneDatabase(template.databaseUrl, path.basename(dataDir));
	writeFileSync(path.join(dataDir, DATABASE_URL_FILE), databaseUrl);
	return { ...template, dataDir, databaseUrl };
}

/** Seeds the template once per test run (see global-setup.ts). */
export async function createTemplate(): Promise<Seeded> {
	const dataDir = mkdtempSync(path.join(os.tmpdir(), 'phasewarden-template-'));
	const databaseUrl = testPgUrl ? await createDatabase(testPgUrl, path.basename(dataDir)) : undefined;
	const { db, close } = await openConfiguredDatabase({ dataDir, databaseUrl, migrationsDir: path.join(root, 'drizzle') });
	try {
		const auth = createAuth({ db, secret: SECRET, baseURL: 'http://127.0.0.1' });
		for (const p of Object.values(people)) await addUser(auth, { ...p, password: PASSWORD });
		const setup = await createSetup(
			db,
			{ name: 'Test fridge · tripler', description: '', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 },
			null
		);
		const { secret } = await createAgentToken(db, setup.id, 'integration test', null);
		return { dataDir, setupId: setup.id, token: secret, databaseUrl };
	} finally {
		await close();
	}
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

export interface RunningServer {
	url: string;
	wsUrl: string;
	port: number;
	process: ChildProcess;
	output: () => string;
	stop(): Promise<void>;
	kill9(): Promise<void>;
}

export async function startServer(dataDir: string, port?: number, extraEnv: Record<string, string> = {}): Promise<RunningServer> {
	port ??= await freePort();
	const url = `http://127.0.0.1:${port}`;
	let log = '';
	const child = spawn(process.execPath, [...SERVER_NODE_FLAGS, path.join(root, 'src/bin/serve.js')], {
		cwd: root,
		env: {
			...process.env,
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: url,
			PHASEWARDEN_DATA: dataDir,
			...(databaseUrlOf(dataDir) ? { DATABASE_URL: databaseUrlOf(dataDir)! } : {}),
			PHASEWARDEN_CATCHER: '1',
			PHASEWARDEN_CATCHER_PORT: '0',
			PHASEWARDEN_SILENCE_CHECK_MS: '300',
			// A group's first page waits this long for the rest of its group (10 s in production).
			PHASEWARDEN_GROUP_GATHER_S: '2',
			// No morning report crosses a test by accident; the report test turns them on.
			PHASEWARDEN_REPORTS: '0',
			BETTER_AUTH_SECRET: SECRET,
			...extraEnv
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	child.stdout!.on('data', (d) => (log += d));
	child.stderr!.on('data', (d) => (log += d));
	const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
	for (let i = 0; ; i++) {
		if (child.exitCode !== null) throw new Error(`server exited during start-up:\n${log}`);
		if (i > 300) throw new Error(`server did not start:\n${log}`);
		try {
			const res = await fetch(`${url}/api/health`);
			if (res.ok) break;
		} catch {
			/* not listening yet */
		}
		await new Promise((r) => setTimeout(r, 100));
	}
	return {
		url,
		wsUrl: `ws://127.0.0.1:${port}/api/agent/stream`,
		port,
		process: child,
		output: () => log,
		async stop() {
			if (child.exitCode === null) child.kill('SIGTERM');
			await exited;
		},
		async kill9() {
			child.kill('SIGKILL');
			await exited;
		}
	};
}

/** Signs in through better-auth's own endpoint and returns a fetch that carries the session cookie. */
export async function signIn(server: RunningServer, who: keyof typeof people) {
	const res = await fetch(`${server.url}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: server.url },
		body: JSON.stringify({ email: people[who].email, password: PASSWORD })
	});
	if (!res.ok) throw new Error(`sign-in as ${who} failed: ${res.status} ${await res.text()}`);
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
	return (pathname: string, init: RequestInit = {}) =>
		fetch(`${server.url}${pathname}`, {
			...init,
			headers: { origin: server.url, 'content-type': 'application/json', ...(init.headers ?? {}), cookie }
		});
}
