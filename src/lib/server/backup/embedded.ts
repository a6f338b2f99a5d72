// Backup of the embedded database: PGlite's own dump of its data folder (a gzipped tarball, after
// a checkpoint), and the restore that starts a fresh folder from it. PGlite is one process, so
// both need the server stopped; the CLI says so when it is not.
import { existsSync, mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { lockPath } from '../data-lock';
import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { createPglite } from '../db';
import { DurableNodeFS, durableStartParams } from '../db/durable-fs';
import * as schema from '../db/schema';

export async function dumpEmbedded(dataDir: string, outFile: string): Promise<number> {
	if (!existsSync(path.join(dataDir, 'PG_VERSION'))) throw new Error(`${dataDir} holds no embedded database`);
	const client = createPglite(dataDir);
	const keepAlive = holdEventLoop();
	try {
		// dumpDataDir does not wait for the database to have started (it hangs if called first).
		await client.waitReady;
		const blob = await client.dumpDataDir('gzip');
		const bytes = Buffer.from(await blob.arrayBuffer());
		writeFileSync(outFile, bytes, { mode: 0o600 });
		return bytes.length;
	} finally {
		clearInterval(keepAlive);
		await client.close();
	}
}

/** Restores a dump into `dataDir`, which must be missing or empty, and brings its schema up to date. */
export async function restoreEmbedded(dump: Blob, dataDir: string, migrationsFolder: string): Promise<void> {
	if (existsSync(dataDir) && readdirSync(dataDir).length > 0) {
		throw new Error(`${dataDir} is not empty: restore into a new folder (nothing is overwritten)`);
	}
	const defaults = (PGlite as unknown as { defaultStartParams: string[] }).defaultStartParams;
	mkdirSync(dataDir, { recursive: true });
	const keepAlive = holdEventLoop();
	const client = new PGlite({ fs: new DurableNodeFS(dataDir), startParams: durableStartParams(defaults), loadDataDir: dump });
	try {
		await migrate(drizzle(client, { schema }), { migrationsFolder });
	} finally {
		clearInterval(keepAlive);
		await client.close();
	}
	// The dump holds the folder as it was, pid file and lock included: that process is not this one's.
	rmSync(path.join(dataDir, 'server.pid'), { force: true });
	rmSync(lockPath(dataDir), { recursive: true, force: true });
}

/**
 * PGlite's tarball (de)compression waits on work that holds no handle on the event loop; in a CLI
 * with nothing else pending, Node would exit mid-dump (unsettled top-level await, exit code 13).
 */
function holdEventLoop(): NodeJS.Timeout {
	return setInterval(() => {}, 1000);
}
