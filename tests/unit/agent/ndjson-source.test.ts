// Reading an acquisition script's NDJSON: line-numbered rejections that name the field, files read
// once or followed as they grow (like tail -f), and stdin-like streams.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PassThrough } from 'node:stream';
import { afterEach, describe, expect, test } from 'vitest';
import { fileLines, parseFrameLine, streamLines } from '../../../agent/ndjson-source.ts';

const frame = (seq: number) => ({
	seq,
	t: 1_780_000_000_000 + seq * 1000,
	window_s: 1,
	shots: 100,
	vacuum: 4,
	counts: [16, 16, 16, 16, 16, 16],
	lock: 0.9,
	switches: 0,
	dwell_s: 0.96,
	escapes: 0,
	vacuum_s: 0.04
});
const dirs: string[] = [];
afterEach(() => {
	while (dirs.length) fs.rmSync(dirs.pop()!, { recursive: true, force: true });
});
function tmpFile(text: string): string {
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-ndjson-'));
	dirs.push(dir);
	const file = path.join(dir, 'frames.ndjson');
	fs.writeFileSync(file, text);
	return file;
}
async function collect<T>(it: AsyncIterable<T>): Promise<T[]> {
	const out: T[] = [];
	for await (const x of it) out.push(x);
	return out;
}

describe('parseFrameLine', () => {
	test('a frame line is parsed; a blank line is nothing', () => {
		expect(parseFrameLine(JSON.stringify(frame(3)), 6)).toEqual({ ok: true, frame: frame(3) });
		expect(parseFrameLine('   ', 6)).toBeNull();
	});

	test('rejections say what is wrong and where (DESIGN.md frame table)', () => {
		expect(parseFrameLine('{"seq":1,', 6)).toMatchObject({ ok: false, message: expect.stringMatching(/^not valid JSON/) });
		expect(parseFrameLine(JSON.stringify({ ...frame(1), lock: 1.2 }), 6)).toMatchObject({
			ok: false,
			message: expect.stringMatching(/^lock: /)
		});
		const { seq: _seq, ...noSeq } = frame(1);
		expect(parseFrameLine(JSON.stringify(noSeq), 6)).toMatchObject({ ok: false, message: expect.stringMatching(/^seq: /) });
		// Run-dependent: six counts do not fit a run with three phase states.
		expect(parseFrameLine(JSON.stringify(frame(1)), 3)).toMatchObject({ ok: false, message: expect.stringMatching(/^counts: expected 3/) });
	});
});

describe('fileLines', () => {
	test('reads to the end, numbering lines, including a last line without newline', async () => {
		const file = tmpFile('a\n\nb\r\nc');
		expect(await collect(fileLines(file))).toEqual([
			{ lineNo: 1, line: 'a' },
			{ lineNo: 2, line: '' },
			{ lineNo: 3, line: 'b' },
			{ lineNo: 4, line: 'c' }
		]);
	});

	test('follow: lines appended later arrive, a partial line waits for its newline', async () => {
		const file = tmpFile('one\n');
		const controller = new AbortController();
		const got: string[] = [];
		const reading = (async () => {
			for await (const { line } of fileLines(file, { follow: true, signal: controller.signal, pollMs: 20 })) got.push(line);
		})();
		const until = async (n: number) => {
			for (let i = 0; got.length < n && i < 200; i++) await new Promise((r) => setTimeout(r, 5));
		};
		await until(1);
		fs.appendFileSync(file, 'two\nthr');
		await until(2);
		await new Promise((r) => setTimeout(r, 60));
		expect(got).toEqual(['one', 'two']);
		fs.appendFileSync(file, 'ee\n');
		await until(3);
		controller.abort();
		await reading;
		expect(got).toEqual(['one', 'two', 'three']);
	});

	test('follow: a truncated file is read again from the start', async () => {
		const file = tmpFile('old line one\nold line two\n');
		const controller = new AbortController();
		const got: string[] = [];
		let truncations = 0;
		const reading = (async () => {
			const opts = { follow: true, signal: controller.signal, pollMs: 20, onTruncate: () => truncations++ };
			for await (const { line, lineNo } of fileLines(file, opts)) got.push(`${lineNo}:${line}`);
		})();
		for (let i = 0; got.length < 2 && i < 200; i++) await new Promise((r) => setTimeout(r, 5));
		fs.writeFileSync(file, 'new\n');
		for (let i = 0; got.length < 3 && i < 200; i++) await new Promise((r) => setTimeout(r, 5));
		controller.abort();
		await reading;
		expect(got).toEqual(['1:old line one', '2:old line two', '1:new']);
		expect(truncations).toBe(1);
	});
});

describe('streamLines', () => {
	test('numbers the lines of a stream until it ends', async () => {
		const input = new PassThrough();
		const reading = collect(streamLines(input));
		input.write('x\ny');
		input.end('\nz\n');
		expect((await reading).map((l) => `${l.lineNo}:${l.line}`)).toEqual(['1:x', '2:y', '3:z']);
	});
});
