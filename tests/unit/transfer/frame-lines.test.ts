// The file checker must refuse what the wire refuses (agent/PROTOCOL.md, "A frame") and name the line.
import { describe, expect, it } from 'vitest';
import { MAX_PG_INTEGER } from '../../../src/lib/protocol/frame';
import { checkFrameFile, checkFrameLine, frameBatches, MAX_LISTED_LINES } from '../../../src/lib/transfer/frame-lines';

const good = (seq: number) => ({
	seq,
	t: 1_796_000_000_000 + seq * 1000,
	window_s: 1,
	shots: 100,
	vacuum: 4,
	counts: [48, 48],
	lock: 0.9,
	switches: 1,
	dwell_s: 0.9,
	escapes: 0,
	vacuum_s: 0.1
});
const rules = { states: 2, maxSeq: null };
const streamOf = (text: string) => new Blob([text]).stream();

describe('checkFrameLine', () => {
	it('accepts a wire frame and skips blank lines', () => {
		expect(checkFrameLine(JSON.stringify(good(1)), 1, rules, null)).toEqual({ line: 1, frame: good(1) });
		expect(checkFrameLine('   ', 2, rules, null)).toEqual({ line: 2, blank: true });
	});

	it.each([
		['{"seq":', /^not valid JSON/],
		[JSON.stringify({ ...good(1), seq: MAX_PG_INTEGER + 1 }), /^seq:/],
		[JSON.stringify({ ...good(1), counts: [1, 2, 3] }), /^counts: expected 2 entries/],
		[JSON.stringify({ ...good(1), vacuum: 90 }), /^shots: vacuum \+ counts \(186\) exceed shots \(100\)/],
		[JSON.stringify({ ...good(1), lock: 1.5 }), /^lock:/],
		[JSON.stringify({ ...good(1), transitions: [0, 0, 0] }), /^transitions: expected 4 entries/]
	])('refuses %s', (text, message) => {
		const checked = checkFrameLine(text, 7, rules, null);
		expect(checked).toMatchObject({ line: 7, problem: expect.stringMatching(message) });
	});

	it('refuses seqs out of order and above the bound, saying why', () => {
		expect(checkFrameLine(JSON.stringify(good(3)), 5, rules, { seq: 3, line: 4 })).toMatchObject({
			problem: expect.stringMatching(/seq 3 does not come after seq 3 \(line 4\)/)
		});
		expect(checkFrameLine(JSON.stringify(good(9)), 1, { states: 2, maxSeq: 8, maxSeqReason: 'the run is open' }, null)).toMatchObject({
			problem: 'seq 9 is above 8: the run is open'
		});
	});
});

describe('checkFrameFile', () => {
	it('counts every bad line but lists at most MAX_LISTED_LINES', async () => {
		const text = Array.from({ length: MAX_LISTED_LINES + 5 }, () => 'nope').join('\n');
		const check = await checkFrameFile(streamOf(text), rules);
		expect(check.badLines).toBe(MAX_LISTED_LINES + 5);
		expect(check.problems.length).toBe(MAX_LISTED_LINES);
		expect(check.problems[0].line).toBe(1);
	});

	it('passes a good file, and the second pass yields its frames in batches', async () => {
		const text = [1, 2, 3, 4, 5].map((s) => JSON.stringify(good(s))).join('\n') + '\n';
		expect(await checkFrameFile(streamOf(text), rules)).toEqual({ frames: 5, badLines: 0, problems: [] });
		const batches = [];
		for await (const b of frameBatches(streamOf(text), 2)) batches.push(b.map((f) => f.seq));
		expect(batches).toEqual([[1, 2], [3, 4], [5]]);
	});
});
