// Which of a person's channels a notice goes to, from their preferences: pure, so the rules
// (critical always through, quiet hours across midnight, clear notices optional) are tested alone.
import { zonedParts } from '../ui/zoned-time';

export const PERSONAL_CHANNELS = ['email', 'push', 'sms'] as const;
export type PersonalChannel = (typeof PERSONAL_CHANNELS)[number];
export const ALERT_SEVERITIES = ['critical', 'warning', 'info'] as const;

export type AlertPrefs = {
	channels: readonly string[];
	/** Which severities to be told about; critical is always told (a person cannot opt out of it). */
	severities: readonly string[];
	/** "HH:MM" local times; quiet from start (inclusive) to end (exclusive), across midnight when start > end. */
	quietStart: string | null;
	quietEnd: string | null;
	notifyOnClear: boolean;
};

export const DEFAULT_ALERT_PREFS: AlertPrefs = {
	channels: [...PERSONAL_CHANNELS],
	severities: [...ALERT_SEVERITIES],
	quietStart: null,
	quietEnd: null,
	notifyOnClear: true
};

const HHMM = /^([01]\d|2[0-3]):([0-5]\d)$/;

export function minutesOfDay(hhmm: string): number {
	const m = HHMM.exec(hhmm);
	if (!m) throw new RangeError(`quiet hours: "${hhmm}" is not a time of day as HH:MM (00:00 to 23:59)`);
	return Number(m[1]) * 60 + Number(m[2]);
}

/** Minutes since local midnight of `at` in `timeZone` (an IANA name). */
export function localMinutes(at: Date, timeZone: string): number {
	const { hour, minute } = zonedParts(at.getTime(), timeZone);
	return hour * 60 + minute;
}

export function inQuietHours(prefs: Pick<AlertPrefs, 'quietStart' | 'quietEnd'>, at: Date, timeZone: string): boolean {
	if (!prefs.quietStart || !prefs.quietEnd) return false;
	const start = minutesOfDay(prefs.quietStart);
	const end = minutesOfDay(prefs.quietEnd);
	if (start === end) return false;
	const now = localMinutes(at, timeZone);
	return start < end ? now >= start && now < end : now >= start || now < end;
}

export function channelsFor(prefs: AlertPrefs, severity: string, kind: 'alert' | 'clear', at: Date, timeZone: string): PersonalChannel[] {
	if (kind === 'clear' && !prefs.notifyOnClear) return [];
	if (severity !== 'critical') {
		if (!prefs.severities.includes(severity)) return [];
		if (inQuietHours(prefs, at, timeZone)) return [];
	}
	return PERSONAL_CHANNELS.filter((c) => prefs.channels.includes(c));
}
