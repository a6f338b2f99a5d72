// A seeded data folder for the benchmarks: one observer, one period-tripling setup and an agent
// token (one token serves every run of the setup). Seeded once per script, then copied, because
// password hashing makes seeding slow.
import { cpSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { addUser } from '../../../src/lib/server/auth/users';
import { createAuth } from '../../../src/lib/server/auth/options';
import { openDatabase } from '../../../src/lib/server/db';
import { createSetup } from '../../../src/lib/server/setups/service';
import { createAgentToken } from '../../../src/lib/server/setups/tokens';

export const repoRoot = path.resolve(import.meta.dirname, '../../..');
export const migrationsDir = path.join(repoRoot, 'drizzle');
export const AUTH_SECRET = 'benchmark-secret-not-for-production-0123456789';
export const OBSERVER = { email: 'observer@bench.test', name: 'Bench Observer', role: 'observer' as const, password: 'bench-password-1' };

export interface Seeded {
	dataDir: string;
	setupId: string;
	token: string;
}

const made: string[] = [];
process.on('exit', () => {
	for (const dir of made) rmSync(dir, { recursive: true, force: true });
});

/** A temporary folder removed when the script exits. */
export function tempDir(label: string): string {
	const dir = mkdtempSync(path.join(os.tmpdir(), `phasewarden-bench-${label}-`));
	made.push(dir);
	return dir;
}

export async function seedTemplate(): Promise<Seeded> {
	const dataDir = tempDir('template');
	const { db, close } = await openDatabase(dataDir, migrationsDir);
	try {
		const auth = createAuth({ db, secret: AUTH_SECRET, baseURL: 'http://127.0.0.1' });
		await addUser(auth, OBSERVER);
		const setup = await createSetup(
			db,
			{ name: 'Bench fridge · tripler', description: '', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 },
			null
		);
		const { secret } = await createAgentToken(db, setup.id, 'benchmark', null);
		return { dataDir, setupId: setup.id, token: secret };
	} finally {
		await close();
	}
}

/** A fresh copy of the template for one server. */
export function copySeed(template: Seeded, label: string): Seeded {
	const dataDir = tempDir(label);
	cpSync(template.dataDir, dataDir, { recursive: true });
	return { ...template, dataDir };
}

/** Bytes of every file under dir (apparent sizes), like `du --apparent-size -b`; folders named in `skip` are left out. */
export function folderBytes(dir: string, skip: readonly string[] = []): number {
	let total = 0;
	for (const entry of readdirSync(dir, { withFileTypes: true })) {
		const p = path.join(dir, entry.name);
		if (entry.isDirectory()) total += skip.includes(entry.name) ? 0 : folderBytes(p, skip);
		else if (entry.isFile()) total += statSync(p).size;
	}
	return total;
}
