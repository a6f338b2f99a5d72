// PGlite is one process: a lock on the data folder keeps a second server, or a CLI, out.
// proper-lockfile takes it atomically (a mkdir, so two starting processes cannot both win, as they
// could when a pid file was checked and then written); server.pid beside it names the holder for
// the error message, and lets a lock left by a process that is gone (kill -9, a crash) be taken
// over at once instead of after the lock's stale time.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import lockfile from 'proper-lockfile';

const pidFile = (dataDir: string) => path.join(dataDir, 'server.pid');
/** The lock itself: a folder, as proper-lockfile makes it. Exported for restore, which must not bring one back. */
export const lockPath = (dataDir: string) => path.join(dataDir, 'server.lock');

/**
 * The lock's mtime is refreshed by a timer; a holder whose event loop stalls longer than this is
 * taken for gone by proper-lockfile. Dead holders are found sooner by their pid (below).
 */
const STALE_MS = 60_000;

const releases = new Map<string, () => void>();

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

const inUse = (dataDir: string, holder: number | null) =>
	new Error(`the data directory ${dataDir} is in use by process ${holder ?? '(unknown)'}; stop that server first`);

function acquire(dataDir: string): () => void {
	return lockfile.lockSync(dataDir, {
		lockfilePath: lockPath(dataDir),
		realpath: false,
		stale: STALE_MS,
		onCompromised: (err) => console.warn(`data lock on ${dataDir}: ${err.message}`)
	});
}

const isLocked = (e: unknown) => (e as { code?: string } | null)?.code === 'ELOCKED';

export function lockDataDir(dataDir: string) {
	if (releases.has(path.resolve(dataDir))) return; // this process holds it already
	mkdirSync(dataDir, { recursive: true });
	let release: () => void;
	try {
		release = acquire(dataDir);
	} catch (e) {
		if (!isLocked(e)) throw e;
		const holder = dataDirHolder(dataDir);
		if (holder) throw inUse(dataDir, holder);
		// No pid yet: the holder has just taken the lock and not yet written it (or died in between,
		// which the lock's stale time covers).
		if (!existsSync(pidFile(dataDir))) throw inUse(dataDir, null);
		// Left by a process that is gone: take it over. (Two processes taking over the same dead
		// holder's lock in the same instant could both win; one live holder cannot be pushed out.)
		rmSync(lockPath(dataDir), { recursive: true, force: true });
		try {
			release = acquire(dataDir);
		} catch (again) {
			if (isLocked(again)) throw inUse(dataDir, dataDirHolder(dataDir));
			throw again;
		}
	}
	writeFileSync(pidFile(dataDir), String(process.pid));
	releases.set(path.resolve(dataDir), release);
}

export function unlockDataDir(dataDir: string) {
	const release = releases.get(path.resolve(dataDir));
	releases.delete(path.resolve(dataDir));
	if (release) {
		rmSync(pidFile(dataDir), { force: true });
		try {
			release();
		} catch {
			// Already gone (the folder was removed or the lock compromised): nothing left to free.
		}
		return;
	}
	if (!dataDirHolder(dataDir)) {
		rmSync(pidFile(dataDir), { force: true });
		rmSync(lockPath(dataDir), { recursive: true, force: true });
	}
}
