// Opens the embedded PostgreSQL (PGlite) in the data directory and applies drizzle/ migrations.
// On disk, commits are durable: PostgreSQL's fsync is on and reaches the disk (see durable-fs.ts),
// so a commit that returned survives a power cut.
import { mkdirSync } from 'node:fs';
import { PGlite } from '@electric-sql/pglite';
import { drizzle, type PgliteDatabase } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { DurableNodeFS, durableStartParams } from './durable-fs';
import * as schema from './schema';

export type Db = PgliteDatabase<typeof schema>;
/** The handle a transaction's callback gets. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export { schema };

/** The raw PGlite client for a folder (or `memory://`), durable on disk. */
export function createPglite(dir: string): PGlite {
	if (dir.startsWith('memory://')) return new PGlite(dir);
	// PGlite does not create parent folders itself.
	mkdirSync(dir, { recursive: true });
	const defaults = (PGlite as unknown as { defaultStartParams: string[] }).defaultStartParams;
	return new PGlite({ fs: new DurableNodeFS(dir), startParams: durableStartParams(defaults) });
}

export async function openDatabase(dir: string, migrationsFolder: string): Promise<{ db: Db; client: PGlite; close: () => Promise<void> }> {
	const client = createPglite(dir);
	const db = drizzle(client, { schema });
	await migrate(db, { migrationsFolder });
	return { db, client, close: () => client.close() };
}

export type DatabaseKind = 'embedded' | 'server';

export interface DatabaseLocation {
	/** The embedded database's folder (used when no server URL is given). */
	dataDir: string;
	/** postgres://… of a PostgreSQL server; when set, the embedded database is not opened. */
	databaseUrl?: string;
	migrationsDir: string;
}

/** The database the configuration names: a PostgreSQL server when DATABASE_URL is set, else PGlite. */
export async function openConfiguredDatabase(at: DatabaseLocation): Promise<{ db: Db; kind: DatabaseKind; close: () => Promise<void> }> {
	if (at.databaseUrl) {
		const { openServerDatabase } = await import('./server');
		const { db, close } = await openServerDatabase(at.databaseUrl, at.migrationsDir);
		return { db, kind: 'server', close };
	}
	const { db, close } = await openDatabase(at.dataDir, at.migrationsDir);
	return { db, kind: 'embedded', close };
}
