// The migration that replaces the old notifications table: every row it held reappears in the
// outbox as a finished delivery with its one attempt, so no delivery history is lost.
import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { afterAll, describe, expect, it } from 'vitest';

const folders: string[] = [];
afterAll(() => folders.forEach((f) => rmSync(f, { recursive: true, force: true })));

/** A copy of drizzle/ with only the migrations before `tag`. */
function migrationsBefore(tag: string): string {
	const dir = mkdtempSync(path.join(os.tmpdir(), 'pw-migrations-'));
	folders.push(dir);
	cpSync('drizzle', dir, { recursive: true });
	const journalFile = path.join(dir, 'meta/_journal.json');
	const journal = JSON.parse(readFileSync(journalFile, 'utf8'));
	const cut = journal.entries.findIndex((e: { tag: string }) => e.tag === tag);
	journal.entries = journal.entries.slice(0, cut);
	writeFileSync(journalFile, JSON.stringify(journal));
	return dir;
}

describe('0006_fold_notifications', () => {
	it('moves each old notification into the outbox with its attempt', async () => {
		const client = new PGlite();
		const db = drizzle(client);
		await migrate(db, { migrationsFolder: migrationsBefore('0006_fold_notifications') });
		await client.exec(`
			INSERT INTO "user" (id, name, email, email_verified, created_at, updated_at) VALUES ('u1', 'Ada', 'ada@lab.test', true, now(), now());
			INSERT INTO setups (id, name, "order", states, mode_ghz, nominal_mk) VALUES ('s1', 'fridge', 3, 6, 5, 12);
			INSERT INTO runs (id, setup_id, key, name, "order", states, mode_ghz) VALUES ('r1', 's1', 'k', 'run', 3, 6, 5);
			INSERT INTO incidents (id, run_id, setup_id, kind, severity, summary, evidence) VALUES ('i1', 'r1', 's1', 'lock_lost', 'critical', 'lost', '{}');
			INSERT INTO notifications (incident_id, channel, recipient, reason, status, error, message_id) VALUES
				('i1', 'email', 'ada@lab.test', 'opened', 'sent', NULL, '<m1@mail>'),
				('i1', 'email', 'gone@lab.test', 'opened', 'failed', 'ECONNREFUSED', NULL);
		`);
		await migrate(db, { migrationsFolder: 'drizzle' });
		const { rows } = await client.query<{
			recipient: string;
			status: string;
			provider_ref: string | null;
			last_error: string | null;
			sent_at: Date | null;
			outcome: string;
		}>(
			`SELECT o.recipient, o.status, o.provider_ref, o.last_error, o.sent_at, a.outcome FROM outbox o JOIN outbox_attempts a ON a.outbox_id = o.id ORDER BY o.id`
		);
		expect(rows).toHaveLength(2);
		// A known address becomes the person's id, as new rows have; an unknown one stays as written.
		expect(rows[0]).toMatchObject({ recipient: 'u1', status: 'sent', provider_ref: '<m1@mail>', outcome: 'sent' });
		expect(rows[0].sent_at).not.toBeNull();
		expect(rows[1]).toMatchObject({ recipient: 'gone@lab.test', status: 'failed', last_error: 'ECONNREFUSED', outcome: 'failed' });
		const { rows: tables } = await client.query(`SELECT 1 FROM information_schema.tables WHERE table_name = 'notifications'`);
		expect(tables).toHaveLength(0);
		await client.close();
	}, 240_000);
});
