import { describe, expect, it } from 'vitest';
import { findUnstorableText } from '../../../src/lib/server/http/text-guard';

describe('findUnstorableText', () => {
	it('names the path of a NUL or a lone surrogate, in values and in keys', () => {
		expect(findUnstorableText({ name: 'ok', notes: ['fine', 'a\u0000b'] })).toEqual({
			path: 'notes[1]',
			problem: expect.stringMatching(/NUL/)
		});
		expect(findUnstorableText({ setup: { name: 'x\ud800' } })).toEqual({ path: 'setup.name', problem: expect.stringMatching(/surrogate/) });
		expect(findUnstorableText({ ['k\u0000']: 1 })?.path).toBe('k\u0000 (name)');
	});

	it('passes well-formed text, including astral characters (a paired surrogate)', () => {
		expect(findUnstorableText({ name: 'fridge 🧊 ½', n: 3, ok: true, nothing: null })).toBeNull();
	});
});
