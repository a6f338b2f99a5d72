// When a person's morning report is due: their wall-clock time (e.g. 08:00) in a time zone, turned
// into instants with the Intl API (so summer time is the zone database's business, not ours).
// Written by hand because the offset search is a few lines; a date library would add a dependency
// for it. The zone arithmetic itself (wall-clock parts, offsets) is ui/zoned-time.ts's.
import { isTimeZone, zonedParts as civilIn, zoneOffsetMs as offsetAt } from '../ui/zoned-time';

export const REPORT_TIME = /^([01]\d|2[0-3]):([0-5]\d)$/;
const DAY_MS = 86_400_000;
/** A report never reaches further back than this, however long the server was down. */
export const MAX_REPORT_SPAN_MS = 7 * DAY_MS;

export { isTimeZone };

export function parseReportTime(hhmm: string): { hour: number; minute: number } {
	const m = REPORT_TIME.exec(hhmm);
	if (!m) throw new RangeError(`report time must be HH:MM on a 24-hour clock, got ${JSON.stringify(hhmm)}`);
	return { hour: Number(m[1]), minute: Number(m[2]) };
}

/**
 * The instant at which the wall clock in `timeZone` shows the given local date and time. A time
 * skipped by a change to summer time maps to the instant an hour later; a repeated one to the first.
 */
export function zonedInstant(year: number, month: number, day: number, hour: number, minute: number, timeZone: string): number {
	const asUtc = Date.UTC(year, month - 1, day, hour, minute);
	const first = asUtc - offsetAt(asUtc, timeZone);
	const second = asUtc - offsetAt(first, timeZone);
	if (first === second) return first;
	// The offsets before and after a change disagree: take the earlier instant that shows the time, else the later.
	const shows = (ms: number) => {
		const c = civilIn(ms, timeZone);
		return c.hour === hour && c.minute === minute;
	};
	return [Math.min(first, second), Math.max(first, second)].find(shows) ?? Math.max(first, second);
}

/** The latest report instant at or before `ms`. */
export function latestReportAtOrBefore(ms: number, hhmm: string, timeZone: string): number {
	const { hour, minute } = parseReportTime(hhmm);
	const c = civilIn(ms, timeZone);
	for (let back = 0; back < 3; back++) {
		const d = new Date(Date.UTC(c.year, c.month - 1, c.day - back));
		const at = zonedInstant(d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate(), hour, minute, timeZone);
		if (at <= ms) return at;
	}
	throw new Error(`no report time ${hhmm} in ${timeZone} within three days before ${new Date(ms).toISOString()}`);
}

export type ScheduleState = {
	/** When the person's schedule started (no report reaches back before it the first time). */
	armedAt_ms: number;
	/** End of the span of their last scheduled report; null before the first. */
	lastUntil_ms: number | null;
	reportTime: string;
	timeZone: string;
};

/**
 * The span of the report due at `now_ms`, or null when none is. A report is due once a report
 * time has passed since the last report's end (or, before the first, since the schedule started).
 * Missed mornings are folded into one report from the last one's end, at most MAX_REPORT_SPAN_MS;
 * the first report covers the 24 h before its report time.
 */
export function dueReport(now_ms: number, s: ScheduleState): { since_ms: number; until_ms: number } | null {
	const until_ms = latestReportAtOrBefore(now_ms, s.reportTime, s.timeZone);
	const after = s.lastUntil_ms ?? s.armedAt_ms;
	if (until_ms <= after) return null;
	const since_ms = Math.max(s.lastUntil_ms ?? until_ms - DAY_MS, until_ms - MAX_REPORT_SPAN_MS);
	return { since_ms, until_ms };
}
