// The rebuild command's arguments: one target, and a message naming what is wrong otherwise.
import { describe, expect, it } from 'vitest';
import { parseRebuildArgs } from '../../../src/lib/server/rollups/rebuild-args';

describe('parseRebuildArgs', () => {
	it('takes one run or all of them, with --force when asked', () => {
		expect(parseRebuildArgs(['--run', 'abc'])).toEqual({ target: { runId: 'abc' }, force: false });
		expect(parseRebuildArgs(['--all', '--force'])).toEqual({ target: { all: true }, force: true });
	});

	it('names the problem with anything else', () => {
		expect(() => parseRebuildArgs([])).toThrow(/--run ID or --all/);
		expect(() => parseRebuildArgs(['--run', 'a', '--all'])).toThrow(/not both/);
		expect(() => parseRebuildArgs(['--run', ' '])).toThrow(/--run needs a run id/);
		expect(() => parseRebuildArgs(['--every'])).toThrow(/--every/);
		expect(() => parseRebuildArgs(['--all', 'extra'])).toThrow(RangeError);
	});
});
