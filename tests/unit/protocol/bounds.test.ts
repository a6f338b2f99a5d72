// Every number of a frame fits the column that stores it: Postgres `integer` is a signed 32-bit
// integer, largest 2147483647 (PostgreSQL manual, "Numeric Types", table 8.2), and `t` stays within
// the JavaScript Date range of ±8.64e15 ms (ECMA-262, "Time Values and Time Range").
import { describe, expect, test } from 'vitest';
import { describeZodError, frameSchema, MAX_PG_INTEGER, MAX_T_MS, type Frame } from '../../../src/lib/protocol/index.ts';

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
	transitions: [0, 1, 0, 0],
	amp: 3.9,
	aux: { mxc_mK: 12.1 },
	iq: { bins: 2, extent: 6, counts: [500, 500, 500, 500] }
};

function result(frame: unknown): string | null {
	const r = frameSchema.safeParse(frame);
	return r.success ? null : describeZodError(r.error);
}

describe('the column limits themselves', () => {
	test('are the documented values', () => {
		expect(MAX_PG_INTEGER).toBe(2 ** 31 - 1);
		expect(MAX_T_MS).toBe(8.64e15);
		// The end of the Date range is a valid Date, one ms later is not (ECMA-262 TimeClip).
		expect(Number.isNaN(new Date(MAX_T_MS).getTime())).toBe(false);
		expect(Number.isNaN(new Date(MAX_T_MS + 1).getTime())).toBe(true);
		expect(Number.isSafeInteger(MAX_T_MS)).toBe(true);
	});
});

// For each integer column: one below the limit and the limit are accepted, one above is named.
const integerFields: [string, (n: number) => Partial<Frame>, string][] = [
	['seq', (n) => ({ seq: n }), 'seq'],
	['shots', (n) => ({ shots: n, vacuum: 0, counts: [0, 0, 0, 0, 0, 0] }), 'shots'],
	['vacuum', (n) => ({ vacuum: n }), 'vacuum'],
	['switches', (n) => ({ switches: n }), 'switches'],
	['escapes', (n) => ({ escapes: n }), 'escapes'],
	['counts[2]', (n) => ({ counts: [0, 0, n, 0, 0, 0] }), 'counts[2]'],
	['transitions[3]', (n) => ({ transitions: [0, 0, 0, n] }), 'transitions[3]'],
	['iq.counts[1]', (n) => ({ iq: { bins: 2, extent: 6, counts: [0, n, 0, 0] } }), 'iq.counts[1]']
];

describe.each(integerFields)('%s is a Postgres integer', (_name, change, path) => {
	test('one below the limit and the limit are accepted', () => {
		expect(result({ ...valid, ...change(MAX_PG_INTEGER - 1) })).toBeNull();
		expect(result({ ...valid, ...change(MAX_PG_INTEGER) })).toBeNull();
	});

	test('one above the limit, and 2^31, are refused naming the field', () => {
		expect(result({ ...valid, ...change(MAX_PG_INTEGER + 1) })).toMatch(new RegExp(`^${path.replace(/[[\].]/g, '\\$&')}: .*2147483647`));
		expect(result({ ...valid, ...change(2 ** 31) })?.split(':')[0]).toBe(path);
	});
});

describe('t is Unix ms within the Date range', () => {
	test('one below the limit and the limit are accepted', () => {
		expect(result({ ...valid, t: MAX_T_MS - 1 })).toBeNull();
		expect(result({ ...valid, t: MAX_T_MS })).toBeNull();
	});

	test('one above the limit and 1e19 are refused at t', () => {
		expect(result({ ...valid, t: MAX_T_MS + 1 })?.split(':')[0]).toBe('t');
		expect(result({ ...valid, t: 1e19 })?.split(':')[0]).toBe('t');
	});
});

describe('doubles are finite', () => {
	// JSON cannot carry Infinity, but a frame built in JS (the agent's own check) can; 1e308 is finite.
	test.each(['window_s', 'dwell_s', 'vacuum_s', 'amp'] as const)('%s', (field) => {
		expect(result({ ...valid, [field]: 1e308 })).toBeNull();
		expect(result({ ...valid, [field]: Number.POSITIVE_INFINITY })?.split(':')[0]).toBe(field);
		expect(result({ ...valid, [field]: Number.NaN })?.split(':')[0]).toBe(field);
	});

	test('aux values', () => {
		expect(result({ ...valid, aux: { mxc_mK: -1e308 } })).toBeNull();
		expect(result({ ...valid, aux: { mxc_mK: Number.NEGATIVE_INFINITY } })?.split(':')[0]).toBe('aux.mxc_mK');
	});
});
