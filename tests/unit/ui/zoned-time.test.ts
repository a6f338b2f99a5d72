// Pages show times on the lab's clock, whatever zone the server or the browser runs in. Expected
// wall-clock times are worked from the zones' published rules (IANA tz database: Europe/Vienna is
// UTC+1 in winter and UTC+2 from the last Sunday of March, 01:00 UTC; America/New_York is UTC−5
// in winter), not from the code under test.
import { afterEach, describe, expect, it } from 'vitest';
import { formatDateTime, formatTime } from '../../../src/lib/ui/format';
import { setDisplayTimeZone, zoneOffsetMinutes } from '../../../src/lib/ui/zoned-time';
import { timeTicks } from '../../../src/lib/timeline/ticks';

const winter = Date.UTC(2026, 0, 15, 23, 30, 5); // 2026-01-15 23:30:05 UTC

afterEach(() => setDisplayTimeZone('UTC'));

describe('times on the lab clock', () => {
	it('formats in the lab zone, not the process zone', () => {
		setDisplayTimeZone('Europe/Vienna');
		expect(formatDateTime(winter)).toBe('2026-01-16 00:30:05');
		setDisplayTimeZone('America/New_York');
		expect(formatDateTime(winter)).toBe('2026-01-15 18:30:05');
		setDisplayTimeZone('UTC');
		expect(formatDateTime(winter)).toBe('2026-01-15 23:30:05');
	});

	it('"today" is the lab’s day: just after midnight in Vienna the clock alone, the date for the evening before', () => {
		setDisplayTimeZone('Europe/Vienna');
		const now = new Date(Date.UTC(2026, 0, 16, 0, 10)); // 01:10 in Vienna on the 16th
		expect(formatTime(winter, now)).toBe('00:30:05');
		expect(formatTime(Date.UTC(2026, 0, 15, 22, 0), now)).toBe('15 Jan 23:00');
	});

	it('follows summer time: Vienna is UTC+2 after the last Sunday of March 2026 (29 March, 01:00 UTC)', () => {
		setDisplayTimeZone('Europe/Vienna');
		expect(zoneOffsetMinutes(Date.UTC(2026, 2, 29, 0, 59))).toBe(-60);
		expect(zoneOffsetMinutes(Date.UTC(2026, 2, 29, 1, 0))).toBe(-120);
		expect(formatDateTime(Date.UTC(2026, 2, 29, 1, 0))).toBe('2026-03-29 03:00:00');
	});

	it('puts day ticks on the lab’s midnight', () => {
		const from_ms = Date.UTC(2026, 0, 10);
		const ticks = timeTicks({ from_ms, to_ms: from_ms + 5 * 86_400_000 }, 6, 'Europe/Vienna');
		// Vienna's midnight is 23:00 UTC in winter.
		for (const t of ticks) expect(new Date(t.t_ms).getUTCHours()).toBe(23);
		expect(ticks[0].label).toBe('01-11');
	});

	it('refuses a zone that does not exist, by name', () => {
		expect(() => setDisplayTimeZone('Mars/Olympus')).toThrow(/Mars\/Olympus/);
	});
});
