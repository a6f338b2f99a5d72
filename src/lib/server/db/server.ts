// A PostgreSQL server (a facility's, through node-postgres) instead of the embedded database,
// chosen by DATABASE_URL. Same schema and migrations. The server takes care of what the embedded
// database needs us for: fsync, autovacuum, analyze, checkpoints.
import { drizzle } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import type { Db } from './index';
import * as schema from './schema';

/** Connections per app instance: ingest, readers and background work share them. */
const POOL_SIZE = 10;

export async function openServerDatabase(
	url: string,
	migrationsFolder: string
): Promise<{ db: Db; pool: pg.Pool; close: () => Promise<void> }> {
	const pool = new pg.Pool({ connectionString: url, max: POOL_SIZE });
	// An idle connection that drops (server restart) must not take the process down.
	pool.on('error', (err) => console.error('database: idle connection failed', err.message));
	const nodeDb = drizzle(pool, { schema });
	await migrateOnce(pool, () => migrate(nodeDb, { migrationsFolder }));
	// Both drivers answer the query builder alike and `execute` with `{ rows }`; the app is typed
	// against the embedded one's handle.
	return { db: nodeDb as unknown as Db, pool, close: () => pool.end() };
}

/** Several instances may start together: a session advisory lock lets one migrate at a time. */
async function migrateOnce(pool: pg.Pool, run: () => Promise<void>) {
	const client = await pool.connect();
	try {
		await client.query('SELECT pg_advisory_lock(hashtext($1))', ['phasewarden:migrate']);
		try {
			await run();
		} finally {
			await client.query('SELECT pg_advisory_unlock(hashtext($1))', ['phasewarden:migrate']);
		}
	} finally {
		client.release();
	}
}
