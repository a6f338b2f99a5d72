// The calendar and clock of an instant in the lab's time zone (PHASEWARDEN_TIME_ZONE, else UTC).
// Pages show every time in that one zone, on the server and in the browser alike: the page a server
// renders then reads the same after hydration, and it agrees with the e-mails, reports and rota,
// which already speak the lab's time. The root layout sets the zone from the server's setting.

let displayZone = 'UTC';

/** Sets the zone every page formats times in (the root layout does, from the lab's setting). */
export function setDisplayTimeZone(timeZone: string): void {
	if (!isTimeZone(timeZone)) throw new RangeError(`unknown time zone ${JSON.stringify(timeZone)} (use an IANA name such as Europe/Vienna)`);
	displayZone = timeZone;
}

export function displayTimeZone(): string {
	return displayZone;
}

export type ZonedParts = { year: number; month: number; day: number; hour: number; minute: number; second: number };

export function isTimeZone(tz: string): boolean {
	try {
		new Intl.DateTimeFormat('en-GB', { timeZone: tz });
		return true;
	} catch {
		return false;
	}
}

const formatters = new Map<string, Intl.DateTimeFormat>();

/** Year, month (1–12), day, hour (0–23), minute and second of `ms` on the wall clock of `timeZone`. */
export function zonedParts(ms: number, timeZone: string = displayZone): ZonedParts {
	let f = formatters.get(timeZone);
	if (!f) {
		if (!isTimeZone(timeZone))
			throw new RangeError(`unknown time zone ${JSON.stringify(timeZone)} (use an IANA name such as Europe/Vienna)`);
		f = new Intl.DateTimeFormat('en-GB', {
			timeZone,
			year: 'numeric',
			month: 'numeric',
			day: 'numeric',
			hour: 'numeric',
			minute: 'numeric',
			second: 'numeric',
			hourCycle: 'h23'
		});
		formatters.set(timeZone, f);
	}
	const parts = Object.fromEntries(f.formatToParts(new Date(ms)).map((p) => [p.type, p.value]));
	return { year: +parts.year, month: +parts.month, day: +parts.day, hour: +parts.hour, minute: +parts.minute, second: +parts.second };
}

/** Offset of the zone from UTC at instant ms (local − UTC, in ms). */
export function zoneOffsetMs(ms: number, timeZone: string = displayZone): number {
	const c = zonedParts(ms, timeZone);
	return Date.UTC(c.year, c.month - 1, c.day, c.hour, c.minute, c.second) - (ms - (((ms % 1000) + 1000) % 1000));
}

/** Minutes the zone's wall clock is behind UTC at `ms`, as Date#getTimezoneOffset counts them (UTC+1 → −60). */
export function zoneOffsetMinutes(ms: number, timeZone: string = displayZone): number {
	return -Math.round(zoneOffsetMs(ms, timeZone) / 60_000);
}

const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
const pad = (n: number) => String(n).padStart(2, '0');

/** "03:41:07" */
export const clockText = (p: ZonedParts) => `${pad(p.hour)}:${pad(p.minute)}:${pad(p.second)}`;
/** "03:41" */
export const hourMinuteText = (p: ZonedParts) => `${pad(p.hour)}:${pad(p.minute)}`;
/** "12 Mar" */
export const dayMonthText = (p: ZonedParts) => `${p.day} ${MONTHS[p.month - 1]}`;
/** "2025-03-12 03:41:07" */
export const dateTimeText = (p: ZonedParts) => `${p.year}-${pad(p.month)}-${pad(p.day)} ${clockText(p)}`;
export const sameDay = (a: ZonedParts, b: ZonedParts) => a.year === b.year && a.month === b.month && a.day === b.day;
