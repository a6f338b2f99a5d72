// The demo's rota must have its first person on call at any moment it is seeded: handed over today
// at 00:00 lab time. Dates and weekdays are checked against a calendar read by hand (18 March 2026
// is a Wednesday; Auckland is UTC+13 in March, Honolulu UTC−10 all year).
import { describe, expect, it } from 'vitest';
import { rotationAt } from '../../../src/lib/oncall/rota';
import { localToday } from '../../../src/lib/server/demo/on-call';

describe('localToday', () => {
	it('gives the local date and ISO weekday in the lab’s zone', () => {
		const at = new Date('2026-03-18T12:00:00Z');
		expect(localToday(at, 'UTC')).toEqual({ date: '2026-03-18', weekday: 3 });
		expect(localToday(at, 'Pacific/Auckland')).toEqual({ date: '2026-03-19', weekday: 4 });
		expect(localToday(new Date('2026-03-16T05:00:00Z'), 'Pacific/Honolulu')).toEqual({ date: '2026-03-15', weekday: 7 });
	});

	it('makes a rota handed over today at 00:00 put its first person on call now and for the rest of the week', () => {
		for (const zone of ['UTC', 'Pacific/Auckland', 'Pacific/Honolulu', 'Europe/Vienna']) {
			for (const iso of ['2026-03-18T12:00:00Z', '2026-03-22T23:59:00Z', '2026-03-16T00:01:00Z']) {
				const now = new Date(iso);
				const today = localToday(now, zone);
				const rota = { members: ['first', 'second'], handoverWeekday: today.weekday, handoverTime: '00:00', startsOn: today.date };
				expect(rotationAt(rota, now, zone), `${zone} ${iso}`).toEqual({ primary: 'first', secondary: 'second' });
				expect(rotationAt(rota, new Date(now.getTime() + 6 * 86_400_000), zone).primary).toBe('first');
			}
		}
	});
});
