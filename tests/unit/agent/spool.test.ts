// The spool keeps exactly the unacknowledged frames across a crash: append-only NDJSON, atomic
// compaction, tolerance of a line torn by a crash mid-write. (Expected contents are computed here
// from the frames the test itself put in.)
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, test } from 'vitest';
import { simulateFrames } from '../../../agent/simulate.ts';
import { Spool } from '../../../agent/spool.ts';

const dirs: string[] = [];
afterEach(() => {
	while (dirs.length) fs.rmSync(dirs.pop()!, { recursive: true, force: true });
});
function tmpFile(): string {
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-spool-'));
	dirs.push(dir);
	return path.join(dir, 'nested', 'run.spool.ndjson');
}
const frames = (count: number, startSeq = 1) => [...simulateFrames({ seed: 3, startMs: 1.7e12, shots: 50, count, startSeq })];
const seqs = (s: Spool) => s.pending().map((f) => f.seq);
const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, i) => a + i);
const fileSeqs = (file: string) =>
	fs
		.readFileSync(file, 'utf8')
		.split('\n')
		.filter(Boolean)
		.map((l) => JSON.parse(l).seq as number);

describe('Spool', () => {
	test('frames written are there after a reload, field for field as sent', () => {
		const file = tmpFile();
		const written = frames(20);
		const a = Spool.open(file);
		expect(a.add(written)).toHaveLength(20);
		// No close: the process "crashed".
		const b = Spool.open(file);
		expect(b.pending()).toEqual(written);
		expect(b.highestSeq).toBe(20);
	});

	test('a seq already held or acknowledged is not taken twice', () => {
		const a = Spool.open(tmpFile());
		a.add(frames(10));
		expect(a.add(frames(12))).toHaveLength(2);
		a.ack(12);
		expect(a.add(frames(5, 8))).toHaveLength(0); // 8..12 acknowledged
		expect(a.add(frames(2, 13)).map((f) => f.seq)).toEqual([13, 14]);
	});

	test('compaction keeps exactly the unacknowledged frames, on disk and after a reload', () => {
		const file = tmpFile();
		const a = Spool.open(file, { minCompactLines: 1 });
		a.add(frames(100));
		a.ack(40); // 40 % stale: below half, the file is not rewritten yet
		expect(a.linesOnDisk).toBe(100);
		expect(fileSeqs(file)).toEqual(range(1, 100));
		a.ack(70); // 70 % stale: rewritten
		expect(a.linesOnDisk).toBe(30);
		expect(fileSeqs(file)).toEqual(range(71, 100));
		expect(seqs(Spool.open(file))).toEqual(range(71, 100));
		// Appends after a compaction land in the new file.
		a.add(frames(5, 101));
		expect(fileSeqs(file)).toEqual(range(71, 105));
		expect(fs.existsSync(`${file}.tmp`)).toBe(false);
	});

	test('a steady stream does not rewrite the file on every ack', () => {
		const file = tmpFile();
		const a = Spool.open(file); // default: at least 1000 stale lines before a rewrite
		for (let i = 0; i < 10; i++) {
			a.add(frames(10, 1 + 10 * i));
			a.ack(10 * (i + 1));
		}
		expect(a.size).toBe(0);
		expect(a.linesOnDisk).toBe(100);
		a.close(); // closing compacts what is stale
		expect(fs.readFileSync(file, 'utf8')).toBe('');
	});

	test('a line torn by a crash is dropped with a message and the rest is kept', () => {
		const file = tmpFile();
		const a = Spool.open(file);
		a.add(frames(3));
		fs.appendFileSync(file, '{"seq":4,"t":17');
		const log: string[] = [];
		const b = Spool.open(file, { log: (l) => log.push(l) });
		expect(seqs(b)).toEqual([1, 2, 3]);
		expect(log.join('\n')).toMatch(/cut short/);
		// The torn tail must not glue itself to the next line written.
		b.add(frames(1, 4));
		expect(seqs(Spool.open(file))).toEqual([1, 2, 3, 4]);
	});

	test('drop removes one frame and rewrites at once', () => {
		const file = tmpFile();
		const a = Spool.open(file);
		a.add(frames(5));
		expect(a.drop(3)).toBe(true);
		expect(a.drop(3)).toBe(false);
		expect(fileSeqs(file)).toEqual([1, 2, 4, 5]);
	});
});
