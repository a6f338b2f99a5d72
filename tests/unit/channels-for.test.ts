// Quiet-hour boundaries in real time zones: the offsets come from the IANA tz database as shipped
// with Node's ICU (Europe/Vienna is UTC+1 in winter, UTC+2 in summer; Asia/Tokyo is UTC+9 all year).
import { describe, expect, it } from 'vitest';
import { channelsFor, DEFAULT_ALERT_PREFS, inQuietHours, minutesOfDay, type AlertPrefs } from '../../src/lib/alerting/channels-for';

const night: AlertPrefs = { ...DEFAULT_ALERT_PREFS, quietStart: '22:00', quietEnd: '07:00' };

describe('quiet hours', () => {
	it('span midnight: 23:30 and 06:59 are quiet, 07:00 and 21:59 are not (Vienna in winter, UTC+1)', () => {
		expect(inQuietHours(night, new Date('2026-01-14T22:30:00Z'), 'Europe/Vienna')).toBe(true); // 23:30 local
		expect(inQuietHours(night, new Date('2026-01-15T05:59:00Z'), 'Europe/Vienna')).toBe(true); // 06:59 local
		expect(inQuietHours(night, new Date('2026-01-15T06:00:00Z'), 'Europe/Vienna')).toBe(false); // 07:00 local
		expect(inQuietHours(night, new Date('2026-01-15T20:59:00Z'), 'Europe/Vienna')).toBe(false); // 21:59 local
		expect(inQuietHours(night, new Date('2026-01-15T21:00:00Z'), 'Europe/Vienna')).toBe(true); // 22:00 local
	});

	it('follow the zone: the same instant is quiet in Tokyo and not in UTC', () => {
		const at = new Date('2026-07-01T14:00:00Z'); // 23:00 in Tokyo (UTC+9)
		expect(inQuietHours(night, at, 'Asia/Tokyo')).toBe(true);
		expect(inQuietHours(night, at, 'UTC')).toBe(false);
	});

	it('within one day when start < end', () => {
		const lunch = { quietStart: '12:00', quietEnd: '13:00' };
		expect(inQuietHours(lunch, new Date('2026-03-02T12:30:00Z'), 'UTC')).toBe(true);
		expect(inQuietHours(lunch, new Date('2026-03-02T13:00:00Z'), 'UTC')).toBe(false);
		expect(inQuietHours(lunch, new Date('2026-03-02T11:59:00Z'), 'UTC')).toBe(false);
	});

	it('rejects a time that is not HH:MM, naming it', () => {
		expect(() => minutesOfDay('25:00')).toThrow(/25:00/);
		expect(() => minutesOfDay('7:00')).toThrow(/HH:MM/);
	});
});

describe('channelsFor', () => {
	const at3am = new Date('2026-01-15T02:00:00Z'); // 03:00 in Vienna, inside the quiet hours

	it('lets critical through during quiet hours, on the chosen channels only', () => {
		expect(channelsFor({ ...night, channels: ['push', 'sms'] }, 'critical', 'alert', at3am, 'Europe/Vienna')).toEqual(['push', 'sms']);
	});

	it('holds warnings during quiet hours and sends them outside', () => {
		expect(channelsFor(night, 'warning', 'alert', at3am, 'Europe/Vienna')).toEqual([]);
		expect(channelsFor(night, 'warning', 'alert', new Date('2026-01-15T10:00:00Z'), 'Europe/Vienna')).toEqual(['email', 'push', 'sms']);
	});

	it('drops severities the person did not choose, but never critical', () => {
		const onlyCritical = { ...DEFAULT_ALERT_PREFS, severities: [] };
		expect(channelsFor(onlyCritical, 'warning', 'alert', at3am, 'UTC')).toEqual([]);
		expect(channelsFor(onlyCritical, 'critical', 'alert', at3am, 'UTC')).toEqual(['email', 'push', 'sms']);
	});

	it('sends clear notices only to those who want them', () => {
		expect(channelsFor({ ...DEFAULT_ALERT_PREFS, notifyOnClear: false }, 'critical', 'clear', at3am, 'UTC')).toEqual([]);
		expect(channelsFor({ ...DEFAULT_ALERT_PREFS, channels: ['email'] }, 'critical', 'clear', at3am, 'UTC')).toEqual(['email']);
	});
});
