// Opens the embedded PostgreSQL (PGlite) in the data directory and applies drizzle/ migrations.
import { mkdirSync } from 'node:fs';
import { PGlite } from '@electric-sql/pglite';
import { drizzle, type PgliteDatabase } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import * as schema from './schema';

export type Db = PgliteDatabase<typeof schema>;
export { schema };

export async function openDatabase(dir: string, migrationsFolder: string): Promise<{ db: Db; close: () => Promise<void> }> {
	// PGlite does not create parent folders itself.
	if (!dir.startsWith('memory://')) mkdirSync(dir, { recursive: true });
	const client = new PGlite(dir);
	const db = drizzle(client, { schema });
	await migrate(db, { migrationsFolder });
	return { db, close: () => client.close() };
}
