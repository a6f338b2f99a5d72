// Who is on call at an instant: a weekly rotation handed over at a wall-clock time in the lab's
// time zone, with overrides on top. Pure, so the rota, the calendar and the alerts agree.
// Written by hand rather than with a date library: the only calendar arithmetic needed is "local
// wall-clock minutes since a fixed Monday", which Intl.DateTimeFormat gives for any IANA zone (zonedParts), and
// comparing wall-clock minutes makes a handover happen at the same local time across DST changes.
import { zonedParts } from '../ui/zoned-time';

export interface WeeklyRota {
	/** User ids in rotation order; the first is on call in the week that starts on `startsOn`. */
	members: string[];
	/** ISO weekday of the handover: 1 = Monday … 7 = Sunday. */
	handoverWeekday: number;
	/** Local wall-clock time of the handover, "HH:MM". */
	handoverTime: string;
	/** Local date "YYYY-MM-DD" on or after which `members[0]` takes the first handover. */
	startsOn: string;
}

export interface RotaOverride {
	userId: string;
	from: Date;
	until: Date;
}

export interface OnCall {
	primary: string | null;
	secondary: string | null;
}

const MINUTES_PER_DAY = 1440;
const MINUTES_PER_WEEK = 7 * MINUTES_PER_DAY;
// 1970-01-05 was a Monday: civil days are counted from there so week arithmetic starts on Monday.
const EPOCH_MONDAY_DAYS = 4;

function civilDays(year: number, month: number, day: number): number {
	return Math.floor(Date.UTC(year, month - 1, day) / 86_400_000) - EPOCH_MONDAY_DAYS;
}

/** Wall-clock minutes in `timeZone` since Monday 1970-01-05 00:00 local. */
export function localMinutes(at: Date, timeZone: string): number {
	const parts = zonedParts(at.getTime(), timeZone);
	return civilDays(parts.year, parts.month, parts.day) * MINUTES_PER_DAY + parts.hour * 60 + parts.minute;
}

export function parseHandoverTime(hhmm: string): number {
	const m = /^([01]\d|2[0-3]):([0-5]\d)$/.exec(hhmm);
	if (!m) throw new RangeError(`handover time must be HH:MM (24-hour), got ${JSON.stringify(hhmm)}`);
	return Number(m[1]) * 60 + Number(m[2]);
}

function parseDate(ymd: string): number {
	const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(ymd);
	if (!m) throw new RangeError(`startsOn must be YYYY-MM-DD, got ${JSON.stringify(ymd)}`);
	return civilDays(Number(m[1]), Number(m[2]), Number(m[3]));
}

/** Index of the rota week containing local minute `minutes` (weeks begin at the handover). */
function weekIndex(rota: WeeklyRota, minutes: number): number {
	const handoverOffset = (rota.handoverWeekday - 1) * MINUTES_PER_DAY + parseHandoverTime(rota.handoverTime);
	return Math.floor((minutes - handoverOffset) / MINUTES_PER_WEEK);
}

const mod = (a: number, n: number) => ((a % n) + n) % n;

/** The rotation alone: primary this week, secondary the next person in order. */
export function rotationAt(rota: WeeklyRota, at: Date, timeZone: string): OnCall {
	const n = rota.members.length;
	if (n === 0) return { primary: null, secondary: null };
	if (!Number.isInteger(rota.handoverWeekday) || rota.handoverWeekday < 1 || rota.handoverWeekday > 7)
		throw new RangeError(`handover weekday must be 1 (Monday) to 7 (Sunday), got ${rota.handoverWeekday}`);
	const handoverOffset = (rota.handoverWeekday - 1) * MINUTES_PER_DAY + parseHandoverTime(rota.handoverTime);
	// members[0] takes the first handover on or after startsOn 00:00; before it, the last person is on.
	const start = parseDate(rota.startsOn) * MINUTES_PER_DAY;
	const startWeek = weekIndex(rota, start) + (mod(start - handoverOffset, MINUTES_PER_WEEK) === 0 ? 0 : 1);
	const primaryIndex = mod(weekIndex(rota, localMinutes(at, timeZone)) - startWeek, n);
	return { primary: rota.members[primaryIndex], secondary: n > 1 ? rota.members[mod(primaryIndex + 1, n)] : null };
}

/**
 * Who is on call at `at`. An override makes its person primary for its span (the latest-starting
 * override wins when they overlap); the person the rotation names then backs them up as secondary.
 */
export function onCallAt(rota: WeeklyRota | null, overrides: RotaOverride[], at: Date, timeZone: string): OnCall {
	const regular = rota ? rotationAt(rota, at, timeZone) : { primary: null, secondary: null };
	const active = overrides
		.filter((o) => o.from.getTime() <= at.getTime() && at.getTime() < o.until.getTime())
		.sort((a, b) => b.from.getTime() - a.from.getTime())[0];
	if (!active) return regular;
	const secondary = regular.primary !== active.userId ? regular.primary : regular.secondary !== active.userId ? regular.secondary : null;
	return { primary: active.userId, secondary };
}

export interface OnCallSpan extends OnCall {
	from: Date;
	until: Date;
}

/** Who is on call between two instants, as spans where nobody changes (5-minute resolution plus exact override edges). */
export function onCallSpans(
	rota: WeeklyRota | null,
	overrides: RotaOverride[],
	from: Date,
	until: Date,
	timeZone: string,
	step_ms = 5 * 60_000
): OnCallSpan[] {
	const points = new Set<number>();
	for (let t = Math.ceil(from.getTime() / step_ms) * step_ms; t < until.getTime(); t += step_ms) points.add(t);
	for (const o of overrides)
		for (const t of [o.from.getTime(), o.until.getTime()]) if (t > from.getTime() && t < until.getTime()) points.add(t);
	const sorted = [from.getTime(), ...[...points].filter((t) => t > from.getTime()).sort((a, b) => a - b)];
	const spans: OnCallSpan[] = [];
	for (const t of sorted) {
		const who = onCallAt(rota, overrides, new Date(t), timeZone);
		const last = spans.at(-1);
		if (last && last.primary === who.primary && last.secondary === who.secondary) continue;
		if (last) last.until = new Date(t);
		spans.push({ ...who, from: new Date(t), until });
	}
	return spans;
}

/** The instant a local wall-clock "YYYY-MM-DDTHH:MM" names in `timeZone` (in a skipped hour: just after the jump). */
export function fromLocal(local: string, timeZone: string): Date {
	const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/.exec(local);
	if (!m) throw new RangeError(`a local time must be YYYY-MM-DDTHH:MM, got ${JSON.stringify(local)}`);
	const target = civilDays(Number(m[1]), Number(m[2]), Number(m[3])) * MINUTES_PER_DAY + Number(m[4]) * 60 + Number(m[5]);
	let t = (target + EPOCH_MONDAY_DAYS * MINUTES_PER_DAY) * 60_000;
	// Two corrections reach the offset in force at that instant (offsets change at most once nearby).
	for (let i = 0; i < 2; i++) t -= (localMinutes(new Date(t), timeZone) - target) * 60_000;
	return new Date(t);
}
