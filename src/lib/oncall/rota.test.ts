// onCallAt against calendar facts from outside the project: the weekdays of 2026 dates (any
// calendar) and the EU summer-time dates of Directive 2000/84/EC, Art. 2 and 3 (summer time starts
// at 01:00 UTC on the last Sunday of March and ends at 01:00 UTC on the last Sunday of October:
// 2026-03-29 and 2026-10-25), which Europe/Vienna follows (CET = UTC+1, CEST = UTC+2).
import { describe, expect, it } from 'vitest';
import { onCallAt, onCallSpans, rotationAt, type WeeklyRota } from './rota';

const VIENNA = 'Europe/Vienna';
// 2026-03-16 is a Monday.
const rota: WeeklyRota = { members: ['ana', 'ben', 'cleo'], handoverWeekday: 1, handoverTime: '09:00', startsOn: '2026-03-16' };
const at = (iso: string) => new Date(iso);

describe('rotationAt', () => {
	it('hands over on Monday 09:00 local in winter (CET, UTC+1)', () => {
		expect(rotationAt(rota, at('2026-03-16T07:59:00Z'), VIENNA).primary).toBe('cleo');
		expect(rotationAt(rota, at('2026-03-16T08:00:00Z'), VIENNA)).toEqual({ primary: 'ana', secondary: 'ben' });
		expect(rotationAt(rota, at('2026-03-23T07:59:00Z'), VIENNA).primary).toBe('ana');
		expect(rotationAt(rota, at('2026-03-23T08:00:00Z'), VIENNA)).toEqual({ primary: 'ben', secondary: 'cleo' });
	});

	it('keeps the local handover time across the change to summer time (Directive 2000/84/EC: 2026-03-29)', () => {
		// Monday 2026-03-30 09:00 CEST is 07:00 UTC, an hour earlier in UTC than the week before.
		expect(rotationAt(rota, at('2026-03-30T06:59:00Z'), VIENNA).primary).toBe('ben');
		expect(rotationAt(rota, at('2026-03-30T07:00:00Z'), VIENNA)).toEqual({ primary: 'cleo', secondary: 'ana' });
		// And wraps around to the first person.
		expect(rotationAt(rota, at('2026-04-06T07:00:00Z'), VIENNA).primary).toBe('ana');
	});

	it('hands over when the local clock passes a time the spring-forward skips', () => {
		// Sunday 2026-03-29: local clocks jump from 02:00 to 03:00 at 01:00 UTC; 02:30 never happens.
		const sunday: WeeklyRota = { members: ['ana', 'ben'], handoverWeekday: 7, handoverTime: '02:30', startsOn: '2026-03-22' };
		expect(rotationAt(sunday, at('2026-03-29T00:59:00Z'), VIENNA).primary).toBe('ana');
		expect(rotationAt(sunday, at('2026-03-29T01:00:00Z'), VIENNA).primary).toBe('ben');
	});

	it('keeps the local handover time when summer time ends (Directive 2000/84/EC: 2026-10-25)', () => {
		// Monday 2026-10-26 09:00 CET is 08:00 UTC again.
		const weeksFromStart = 32; // 2026-03-16 → 2026-10-26
		const expected = rota.members[weeksFromStart % 3];
		expect(rotationAt(rota, at('2026-10-26T07:59:00Z'), VIENNA).primary).toBe(rota.members[(weeksFromStart - 1) % 3]);
		expect(rotationAt(rota, at('2026-10-26T08:00:00Z'), VIENNA).primary).toBe(expected);
	});

	it('names nobody for an empty rota and refuses a bad handover', () => {
		expect(rotationAt({ ...rota, members: [] }, at('2026-03-20T00:00:00Z'), VIENNA)).toEqual({ primary: null, secondary: null });
		expect(() => rotationAt({ ...rota, handoverTime: '9am' }, at('2026-03-20T00:00:00Z'), VIENNA)).toThrow(/HH:MM/);
		expect(() => rotationAt({ ...rota, handoverWeekday: 8 }, at('2026-03-20T00:00:00Z'), VIENNA)).toThrow(/weekday/);
	});
});

describe('onCallAt with overrides', () => {
	// "I cover Tuesday night": cleo covers Tuesday 2026-03-17 20:00 to Wednesday 08:00 local (CET).
	const cover = { userId: 'cleo', from: at('2026-03-17T19:00:00Z'), until: at('2026-03-18T07:00:00Z') };

	it('puts the override first and the regular person second, only during its span', () => {
		expect(onCallAt(rota, [cover], at('2026-03-17T18:59:00Z'), VIENNA)).toEqual({ primary: 'ana', secondary: 'ben' });
		expect(onCallAt(rota, [cover], at('2026-03-17T23:00:00Z'), VIENNA)).toEqual({ primary: 'cleo', secondary: 'ana' });
		expect(onCallAt(rota, [cover], at('2026-03-18T07:00:00Z'), VIENNA)).toEqual({ primary: 'ana', secondary: 'ben' });
	});

	it('does not name the same person twice', () => {
		const benCovers = { userId: 'ana', from: at('2026-03-17T00:00:00Z'), until: at('2026-03-18T00:00:00Z') };
		expect(onCallAt(rota, [benCovers], at('2026-03-17T12:00:00Z'), VIENNA)).toEqual({ primary: 'ana', secondary: 'ben' });
	});

	it('works without a rota', () => {
		expect(onCallAt(null, [cover], at('2026-03-17T23:00:00Z'), VIENNA)).toEqual({ primary: 'cleo', secondary: null });
		expect(onCallAt(null, [], at('2026-03-17T23:00:00Z'), VIENNA)).toEqual({ primary: null, secondary: null });
	});
});

describe('onCallSpans', () => {
	it('splits a week at the handover and at the override edges', () => {
		const cover = { userId: 'cleo', from: at('2026-03-17T19:00:00Z'), until: at('2026-03-18T07:00:00Z') };
		const spans = onCallSpans(rota, [cover], at('2026-03-16T00:00:00Z'), at('2026-03-24T00:00:00Z'), VIENNA);
		expect(spans.map((s) => [s.primary, s.from.toISOString()])).toEqual([
			['cleo', '2026-03-16T00:00:00.000Z'],
			['ana', '2026-03-16T08:00:00.000Z'],
			['cleo', '2026-03-17T19:00:00.000Z'],
			['ana', '2026-03-18T07:00:00.000Z'],
			['ben', '2026-03-23T08:00:00.000Z']
		]);
		expect(spans.at(-1)!.until.toISOString()).toBe('2026-03-24T00:00:00.000Z');
	});
});

describe('fromLocal', () => {
	it('reads a Vienna wall-clock time with the offset in force (CET before, CEST after 2026-03-29)', async () => {
		const { fromLocal } = await import('./rota');
		expect(fromLocal('2026-03-17T20:00', VIENNA).toISOString()).toBe('2026-03-17T19:00:00.000Z');
		expect(fromLocal('2026-03-30T09:00', VIENNA).toISOString()).toBe('2026-03-30T07:00:00.000Z');
		expect(() => fromLocal('tuesday night', VIENNA)).toThrow(/YYYY-MM-DDTHH:MM/);
	});
});
