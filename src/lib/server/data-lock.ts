// PGlite is one process: a pid file in the data directory keeps a second server, or a CLI, out.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';

const pidFile = (dataDir: string) => path.join(dataDir, 'server.pid');

function isAlive(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
}

/** The pid of another live process holding the directory, or null. */
export function dataDirHolder(dataDir: string): number | null {
	const file = pidFile(dataDir);
	if (!existsSync(file)) return null;
	const pid = Number(readFileSync(file, 'utf8'));
	return pid && pid !== process.pid && isAlive(pid) ? pid : null;
}

export function lockDataDir(dataDir: string) {
	const holder = dataDirHolder(dataDir);
	if (holder) throw new Error(`the data directory ${dataDir} is in use by process ${holder}; stop that server first`);
	mkdirSync(dataDir, { recursive: true });
	writeFileSync(pidFile(dataDir), String(process.pid));
}

export function unlockDataDir(dataDir: string) {
	if (!dataDirHolder(dataDir)) rmSync(pidFile(dataDir), { force: true });
}
