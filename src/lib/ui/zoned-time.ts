// The calendar and clock of an instant in the lab's time zone (PHASEWARDEN_TIME_ZONE, else UTC).
// Pages show every time in that one zone, on the server and in the browser alike: the page a server
// renders then reads the same after hydration, and it agrees with the e-mails, reports and rota,
// which already speak the lab's time. The root layout sets the zone from the server's setting.

let displayZone = 'UTC';

/** Sets the zone every page formats times in (the root layout does, from the lab's setting). */
export function setDisplayTimeZone(timeZone: string): void {
	// Throws a RangeError naming the zone when it is not one Intl knows.
	new Intl.DateTimeFormat('en-GB', { timeZone });
	displayZone = timeZone;
}

export function displayTimeZone(): string {
	return displayZone;
}

export type ZonedParts = { year: number; month: number; day: number; hour: number; minute: number; second: number };

const formatters = new Map<string, Intl.DateTimeFormat>();
function formatterFor(timeZone: string): Intl.DateTimeFormat {
	let f = formatters.get(timeZone);
	if (!f) {
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
	return f;
}

/** Year, month (1–12), day, hour (0–23), minute and second of `ms` on the wall clock of `timeZone`. */
export function zonedParts(ms: number, timeZone: string = displayZone): ZonedParts {
	const out: ZonedParts = { year: 0, month: 0, day: 0, hour: 0, minute: 0, second: 0 };
	for (const p of formatterFor(timeZone).formatToParts(new Date(ms))) {
		if (p.type in out) out[p.type as keyof ZonedParts] = Number(p.value);
	}
	return out;
}

/** Minutes the zone's wall clock is behind UTC at `ms`, as Date#getTimezoneOffset counts them (UTC+1 → −60). */
export function zoneOffsetMinutes(ms: number, timeZone: string = displayZone): number {
	const p = zonedParts(ms, timeZone);
	const wall = Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second);
	return -Math.round((wall - Math.floor(ms / 1000) * 1000) / 60_000);
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
