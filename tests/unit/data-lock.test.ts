// The data folder's lock between processes: of several that start at once exactly one holds it,
// the others are told the folder and the holder, and a holder killed with SIGKILL does not keep
// the folder locked.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { dataDirHolder, lockDataDir, unlockDataDir } from '../../src/lib/server/data-lock';

const child = path.join(import.meta.dirname, 'data-lock-child.ts');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'pw-data-lock-'));
const started: ChildProcess[] = [];

/** Starts a child that tries the lock; resolves with its first line ("locked" or "refused: …"). */
function tryLock(dir: string): Promise<{ proc: ChildProcess; line: string }> {
	const proc = spawn(process.execPath, ['--import', 'tsx', child, dir], { stdio: ['ignore', 'pipe', 'inherit'] });
	started.push(proc);
	return new Promise((resolve, reject) => {
		proc.stdout!.once('data', (chunk: Buffer) => resolve({ proc, line: chunk.toString().trim() }));
		proc.once('error', reject);
	});
}

afterEach(() => {
	for (const p of started.splice(0)) p.kill('SIGKILL');
});
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('lockDataDir across processes', () => {
	test('of four processes starting at once exactly one holds the folder; the others name it and the holder', async () => {
		const dir = path.join(tmp, 'race');
		const results = await Promise.all([1, 2, 3, 4].map(() => tryLock(dir)));
		const winners = results.filter((r) => r.line === 'locked');
		expect(winners).toHaveLength(1);
		for (const r of results.filter((r) => r !== winners[0])) {
			// A process refused in the instant before the winner wrote its pid cannot name it yet.
			expect(
				[winners[0].proc.pid, '(unknown)'].map(
					(holder) => `refused: the data directory ${dir} is in use by process ${holder}; stop that server first`
				)
			).toContain(r.line);
		}
		expect(() => lockDataDir(dir)).toThrow(`the data directory ${dir} is in use by process ${winners[0].proc.pid}`);
	}, 30_000);

	test('a holder killed with SIGKILL leaves a lock that the next process takes over at once', async () => {
		const dir = path.join(tmp, 'killed');
		const { proc, line } = await tryLock(dir);
		expect(line).toBe('locked');
		expect(dataDirHolder(dir)).toBe(proc.pid);
		const exited = new Promise((resolve) => proc.once('exit', resolve));
		proc.kill('SIGKILL');
		await exited;
		expect(dataDirHolder(dir)).toBeNull();
		lockDataDir(dir);
		unlockDataDir(dir);
		expect((await tryLock(dir)).line).toBe('locked');
	}, 30_000);
});
