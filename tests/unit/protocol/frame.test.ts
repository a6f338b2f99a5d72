// Frame schema of wire protocol v1 against the frame table of DESIGN.md ("Wire protocol v1"):
// every rule of the table, broken one at a time, must be named by its field path.
import { describe, expect, test } from 'vitest';
import { checkFrameAgainstRun, describeZodError, frameSchema, type Frame } from '../../../src/lib/protocol/index.ts';

// A window of a period-tripled oscillator with six phase states, written out by hand.
const valid: Frame = {
	seq: 1,
	t: 1_780_000_000_000,
	window_s: 1,
	shots: 2000,
	vacuum: 40,
	counts: [330, 320, 325, 335, 310, 340],
	lock: 0.93,
	switches: 2,
	dwell_s: 0.98,
	escapes: 1,
	vacuum_s: 0.02,
	transitions: [
		0, 1, 0, 0, 0, 0, /**/ 0, 0, 0, 0, 0, 0, /**/ 0, 0, 0, 0, 0, 0, /**/ 0, 0, 0, 0, 0, 0, /**/ 0, 0, 0, 0, 0, 1, /**/ 0, 0, 0, 0, 0, 0
	],
	amp: 3.9,
	aux: { mxc_mK: 12.1, pump_dBm: -23, bias_uV: 18, detuning_MHz: 0.4 },
	iq: { bins: 2, extent: 6, counts: [500, 500, 500, 500] }
};

/** The field path zod reports for `frame`, or null when it is accepted. */
function errorPath(frame: unknown): string | null {
	const r = frameSchema.safeParse(frame);
	return r.success ? null : describeZodError(r.error).split(':')[0];
}

describe('frameSchema', () => {
	test('accepts a complete frame and one with only the required fields', () => {
		expect(frameSchema.safeParse(valid).success).toBe(true);
		const { transitions, amp, aux, iq, ...required } = valid;
		expect([transitions, amp, aux, iq].every((v) => v !== undefined)).toBe(true);
		expect(frameSchema.safeParse(required).success).toBe(true);
	});

	// Each row: a rule from the DESIGN.md frame table, a frame breaking only that rule, the field path.
	test.each<[string, Partial<Record<keyof Frame, unknown>>, string]>([
		['seq is an integer ≥ 1', { seq: 0 }, 'seq'],
		['seq is an integer', { seq: 1.5 }, 'seq'],
		['t is a number (Unix ms)', { t: 'yesterday' }, 't'],
		['window_s > 0', { window_s: 0 }, 'window_s'],
		['shots is an integer ≥ 0', { shots: -1 }, 'shots'],
		['vacuum is an integer ≥ 0', { vacuum: 2.5 }, 'vacuum'],
		['counts are integers ≥ 0 (negative count)', { counts: [330, -1, 325, 335, 310, 340] }, 'counts[1]'],
		['lock lies in 0…1 (above)', { lock: 1.01 }, 'lock'],
		['lock lies in 0…1 (below)', { lock: -0.1 }, 'lock'],
		['switches is an integer ≥ 0', { switches: -3 }, 'switches'],
		['dwell_s ≥ 0', { dwell_s: -0.1 }, 'dwell_s'],
		['escapes is an integer ≥ 0', { escapes: 0.5 }, 'escapes'],
		['vacuum_s ≥ 0', { vacuum_s: -1 }, 'vacuum_s'],
		['transitions are integers', { transitions: [1.5] }, 'transitions[0]'],
		['amp is a number', { amp: 'high' }, 'amp'],
		['aux values are numbers', { aux: { mxc_mK: 'cold' } }, 'aux.mxc_mK'],
		['aux names are [A-Za-z0-9_]{1,32}', { aux: { 'mxc-temp': 12 } }, 'aux.mxc-temp'],
		['aux names are at most 32 characters', { aux: { ['a'.repeat(33)]: 1 } }, `aux.${'a'.repeat(33)}`],
		['iq counts hold bins × bins integers', { iq: { bins: 2, extent: 6, counts: [1, 2, 3] } }, 'iq.counts'],
		['iq bins ≤ 64', { iq: { bins: 65, extent: 6, counts: new Array(65 * 65).fill(0) } }, 'iq.bins'],
		['iq extent > 0', { iq: { bins: 1, extent: 0, counts: [1] } }, 'iq.extent']
	])('%s', (_rule, change, path) => {
		expect(errorPath({ ...valid, ...change })).toBe(path);
	});

	test('more than 32 aux names is refused at aux', () => {
		const aux = Object.fromEntries(Array.from({ length: 33 }, (_, i) => [`a${i}`, i]));
		expect(errorPath({ ...valid, aux })).toBe('aux');
		const fine = Object.fromEntries(Array.from({ length: 32 }, (_, i) => [`a${i}`, i]));
		expect(errorPath({ ...valid, aux: fine })).toBeNull();
	});

	test('a missing required field is named', () => {
		for (const field of ['seq', 't', 'window_s', 'shots', 'vacuum', 'counts', 'lock', 'switches', 'dwell_s', 'escapes', 'vacuum_s']) {
			const copy: Record<string, unknown> = { ...valid };
			delete copy[field];
			expect(errorPath(copy)).toBe(field);
		}
	});

	test('NaN and infinities are not numbers on the wire', () => {
		expect(errorPath({ ...valid, lock: Number.NaN })).toBe('lock');
		expect(errorPath({ ...valid, aux: { mxc_mK: Number.POSITIVE_INFINITY } })).toBe('aux.mxc_mK');
	});
});

describe('checkFrameAgainstRun', () => {
	test('a frame of the right shape passes', () => {
		expect(checkFrameAgainstRun(valid, 6)).toBeNull();
	});

	test('counts must have K entries, one per phase state of the run', () => {
		expect(checkFrameAgainstRun(valid, 3)?.path).toBe('counts');
		expect(checkFrameAgainstRun({ ...valid, counts: [1, 2, 3, 4, 5] }, 6)?.message).toMatch(/expected 6 .* got 5/);
	});

	test('transitions must have K·K entries', () => {
		expect(checkFrameAgainstRun({ ...valid, transitions: new Array(35).fill(0) }, 6)?.path).toBe('transitions');
	});

	test('vacuum + counts cannot exceed shots', () => {
		// 40 + 1960 = 2000 is exactly the shots of the window; one more is one too many.
		expect(checkFrameAgainstRun({ ...valid, shots: 2000 }, 6)).toBeNull();
		expect(checkFrameAgainstRun({ ...valid, shots: 1999 }, 6)?.path).toBe('shots');
	});
});
