// Backup → restore round trip with the CLI (npm run backup / npm run restore), in whichever mode
// the suite runs: the embedded database's dump into a fresh folder, or pg_dump / pg_restore into a
// fresh database on the PostgreSQL server. Every stored frame must be there afterwards.
import { execFile } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, expect, it, vi } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { createDatabase } from './support/postgres';
import { databaseUrlOf, seedDataDir, signIn, startServer, testPgUrl, type RunningServer } from './support/server';

// Three CLI runs and two server starts.
vi.setConfig({ testTimeout: 240_000 });

const run = promisify(execFile);
const root = path.resolve(import.meta.dirname, '../..');
const tsx = path.join(root, 'node_modules/.bin/tsx');

let server: RunningServer | undefined;
afterAll(async () => {
	await server?.stop();
});

/** Runs a CLI against a data folder (and its database, in server mode). */
function cli(script: string, args: string[], dataDir: string) {
	const databaseUrl = databaseUrlOf(dataDir);
	const env: NodeJS.ProcessEnv = { ...process.env, PHASEWARDEN_DATA: dataDir, DATABASE_URL: databaseUrl ?? '' };
	return run(tsx, [path.join(root, 'src/bin', script), ...args], { cwd: root, env });
}

it('restores a backup into a fresh database with every frame', async () => {
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'backed-up' });
	for (let i = 0; i < 4; i++) agent.send({ type: 'frames', frames: Array.from({ length: 100 }, (_, j) => frame(i * 100 + j + 1)) });
	// A gap (401–409 missing) must survive too.
	agent.send({ type: 'frames', frames: Array.from({ length: 20 }, (_, j) => frame(410 + j)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 429);
	await agent.close();
	await server.stop();

	const work = mkdtempSync(path.join(os.tmpdir(), 'phasewarden-backup-'));
	const file = path.join(work, 'lab.backup');
	const made = await cli('backup.ts', ['--out', file], seeded.dataDir);
	expect(made.stdout).toMatch(/backup written to/);

	const restoredDir = path.join(work, 'restored');
	if (testPgUrl) {
		const { mkdirSync } = await import('node:fs');
		mkdirSync(restoredDir);
		writeFileSync(path.join(restoredDir, 'test-database-url'), await createDatabase(testPgUrl, `restored_${path.basename(work)}`));
	}
	const restored = await cli('restore.ts', [file], restoredDir);
	expect(restored.stdout).toMatch(/restored/);

	server = await startServer(restoredDir);
	const observer = await signIn(server, 'observer');
	const runs = await (await observer('/api/runs')).json();
	const backedUp = runs.runs.find((r: { key: string }) => r.key === 'backed-up');
	expect(backedUp).toBeDefined();
	const { frames } = await (await observer(`/api/runs/${backedUp.id}/frames?from=1&to=1000&limit=5000`)).json();
	const expected = [...Array.from({ length: 400 }, (_, i) => i + 1), ...Array.from({ length: 20 }, (_, j) => 410 + j)];
	expect(frames.map((f: { seq: number }) => f.seq)).toEqual(expected);
	const detail = await (await observer(`/api/runs/${backedUp.id}`)).json();
	expect(detail.gaps).toEqual([expect.objectContaining({ fromSeq: 401, toSeq: 409 })]);
});

// In server mode the refusal is pg_restore's own (--exit-on-error), not ours.
it.skipIf(Boolean(testPgUrl))('refuses to restore over an existing database folder', async () => {
	const seeded = await seedDataDir();
	const file = path.join(mkdtempSync(path.join(os.tmpdir(), 'phasewarden-backup-')), 'x.backup');
	writeFileSync(file, Buffer.from([0x1f, 0x8b, 0, 0, 0]));
	await expect(cli('restore.ts', [file], seeded.dataDir)).rejects.toMatchObject({
		stderr: expect.stringMatching(/is not empty: restore into a new folder/)
	});
});
