// Report times in a time zone. Summer-time dates: EU Directive 2000/84/EC (summer time from 01:00
// UTC on the last Sunday of March to 01:00 UTC on the last Sunday of October), i.e. 2026-03-29 and
// 2026-10-25; US dates: Energy Policy Act of 2005 (second Sunday of March, 02:00 local), 2026-03-08.
import { describe, expect, it } from 'vitest';
import { dueReport, isTimeZone, latestReportAtOrBefore, parseReportTime, zonedInstant } from '../../../src/lib/reports/schedule';

const iso = (s: string) => Date.parse(s);

describe('zonedInstant', () => {
	it('follows the zone across summer time', () => {
		expect(zonedInstant(2026, 3, 28, 8, 0, 'Europe/Berlin')).toBe(iso('2026-03-28T07:00:00Z'));
		expect(zonedInstant(2026, 3, 29, 8, 0, 'Europe/Berlin')).toBe(iso('2026-03-29T06:00:00Z'));
		expect(zonedInstant(2026, 10, 25, 8, 0, 'Europe/Berlin')).toBe(iso('2026-10-25T07:00:00Z'));
		expect(zonedInstant(2026, 3, 8, 8, 0, 'America/New_York')).toBe(iso('2026-03-08T12:00:00Z'));
		expect(zonedInstant(2026, 3, 7, 8, 0, 'America/New_York')).toBe(iso('2026-03-07T13:00:00Z'));
		expect(zonedInstant(2026, 12, 1, 8, 0, 'UTC')).toBe(iso('2026-12-01T08:00:00Z'));
	});

	it('maps a time skipped by the change to a real instant that shows the hour after', () => {
		// 02:30 does not exist in Berlin on 2026-03-29 (clocks jump from 02:00 to 03:00).
		const t = zonedInstant(2026, 3, 29, 2, 30, 'Europe/Berlin');
		expect([iso('2026-03-29T00:30:00Z'), iso('2026-03-29T01:30:00Z')]).toContain(t);
	});
});

describe('dueReport', () => {
	const base = { reportTime: '08:00', timeZone: 'Europe/Berlin' };
	it('is due once the report time has passed since the schedule started, covering the 24 h before', () => {
		const armed = iso('2026-11-30T12:00:00Z');
		expect(dueReport(iso('2026-12-01T06:59:00Z'), { ...base, armedAt_ms: armed, lastUntil_ms: null })).toBeNull();
		expect(dueReport(iso('2026-12-01T07:00:00Z'), { ...base, armedAt_ms: armed, lastUntil_ms: null })).toEqual({
			since_ms: iso('2026-11-30T07:00:00Z'),
			until_ms: iso('2026-12-01T07:00:00Z')
		});
	});

	it('is not due twice for one morning and folds missed mornings into one report', () => {
		const last = iso('2026-12-01T07:00:00Z');
		expect(dueReport(iso('2026-12-01T15:00:00Z'), { ...base, armedAt_ms: 0, lastUntil_ms: last })).toBeNull();
		expect(dueReport(iso('2026-12-04T09:00:00Z'), { ...base, armedAt_ms: 0, lastUntil_ms: last })).toEqual({
			since_ms: last,
			until_ms: iso('2026-12-04T07:00:00Z')
		});
		// More than a week down: the report reaches back seven days only.
		const long = dueReport(iso('2026-12-20T09:00:00Z'), { ...base, armedAt_ms: 0, lastUntil_ms: last })!;
		expect(long.until_ms - long.since_ms).toBe(7 * 86_400_000);
	});

	it('names bad settings', () => {
		expect(() => parseReportTime('8:00')).toThrow(/HH:MM/);
		expect(() => parseReportTime('24:00')).toThrow(/HH:MM/);
		expect(isTimeZone('Mars/Olympus')).toBe(false);
		expect(() => latestReportAtOrBefore(0, '08:00', 'Mars/Olympus')).toThrow(/unknown time zone/);
	});
});
