// How times, ages, durations and values read on screen: one place so every page says it alike.
// Times are on the lab's clock (zoned-time.ts), the same on the server and in the browser.
import { clockText, dateTimeText, dayMonthText, hourMinuteText, sameDay, zonedParts } from './zoned-time';

const pad = (n: number) => String(n).padStart(2, '0');

function toDate(value: string | number | Date): Date {
	return value instanceof Date ? value : new Date(value);
}

/** Clock time of day on the lab's clock, with the date in front when it is not today: "03:41:07" or "12 Mar 03:41". */
export function formatTime(value: string | number | Date | null | undefined, now: Date = new Date()): string {
	if (value == null) return '—';
	const d = toDate(value);
	if (Number.isNaN(d.getTime())) return '—';
	const p = zonedParts(d.getTime());
	if (sameDay(p, zonedParts(now.getTime()))) return clockText(p);
	return `${dayMonthText(p)} ${hourMinuteText(p)}`;
}

/** Full date and time for tables and history: "2025-03-12 03:41:07". */
export function formatDateTime(value: string | number | Date | null | undefined): string {
	if (value == null) return '—';
	const d = toDate(value);
	if (Number.isNaN(d.getTime())) return '—';
	return dateTimeText(zonedParts(d.getTime()));
}

/** A span of seconds in the two largest units that matter: "42 s", "3 min 05 s", "2 h 14 min", "3 d 4 h". */
/** A moment as milliseconds since the epoch, for ordering: loaders give Dates, the JSON API ISO strings. */
export function instantMs(value: string | number | Date): number {
	return new Date(value).getTime();
}

export function formatDuration(seconds: number | null | undefined): string {
	if (seconds == null || !Number.isFinite(seconds)) return '—';
	const s = Math.max(0, Math.floor(seconds));
	if (s < 60) return `${s} s`;
	const m = Math.floor(s / 60);
	if (m < 60) return `${m} min ${pad(s % 60)} s`;
	const h = Math.floor(m / 60);
	if (h < 48) return `${h} h ${pad(m % 60)} min`;
	return `${Math.floor(h / 24)} d ${h % 24} h`;
}

/** How long ago, from a server timestamp: "just now", "12 s ago", "4 min 03 s ago". */
export function formatAge(value: string | number | Date | null | undefined, now: number = Date.now()): string {
	if (value == null) return 'never';
	const t = toDate(value).getTime();
	if (Number.isNaN(t)) return 'never';
	const s = (now - t) / 1000;
	if (s < 2) return 'just now';
	return `${formatDuration(s)} ago`;
}

/** Seconds since a timestamp (negative clock skew reads as 0), or null without one. */
export function ageSeconds(value: string | number | Date | null | undefined, now: number = Date.now()): number | null {
	if (value == null) return null;
	const t = toDate(value).getTime();
	if (Number.isNaN(t)) return null;
	return Math.max(0, (now - t) / 1000);
}

/** A count with thin grouping: 1 234 567. */
export function formatCount(n: number | null | undefined): string {
	if (n == null || !Number.isFinite(n)) return '—';
	return Math.round(n).toLocaleString('en-GB').replace(/,/g, '\u2009');
}

/** A value with fixed decimals, or a dash when absent. */
export function formatFixed(x: number | null | undefined, digits = 2): string {
	if (x == null || !Number.isFinite(x)) return '—';
	return x.toFixed(digits);
}

/** An integer in superscript digits (for powers of ten: 10⁻⁵). */
export function superscript(n: number): string {
	return String(n).replace(/./g, (c) => SUPERSCRIPT[c] ?? c);
}

const SUPERSCRIPT: Record<string, string> = {
	'-': '⁻',
	'0': '⁰',
	'1': '¹',
	'2': '²',
	'3': '³',
	'4': '⁴',
	'5': '⁵',
	'6': '⁶',
	'7': '⁷',
	'8': '⁸',
	'9': '⁹'
};

/**
 * A rate that may span many decades (switching and escape rates): plain for 0.01…9999,
 * otherwise in scientific notation "3.2 × 10⁻⁴".
 */
export function formatRate(x: number | null | undefined, significant = 3): string {
	if (x == null || !Number.isFinite(x)) return '—';
	if (x === 0) return '0';
	const a = Math.abs(x);
	if (a >= 0.01 && a < 10_000) return Number(x.toPrecision(significant)).toString();
	let exp = Math.floor(Math.log10(a));
	let mant = Number((x / 10 ** exp).toPrecision(significant));
	// Rounding can carry into the next decade (9.996 → 10.0): then the exponent takes it.
	if (Math.abs(mant) >= 10) {
		exp += 1;
		mant = Number((x / 10 ** exp).toPrecision(significant));
	}
	return `${mant} × 10${superscript(exp)}`;
}

/** Incident kinds as words people read: the one list lives in $lib/incidents/kinds. */
export { kindLabel, incidentTitle } from '../incidents/kinds';

/** Incident actions as words people read. */
export function actionLabel(action: string): string {
	const known: Record<string, string> = {
		opened: 'Opened',
		acknowledged: 'Acknowledged',
		resolved: 'Resolved',
		auto_resolved: 'Resolved itself',
		condition_cleared: 'Condition cleared',
		note: 'Note',
		paged: 'Paged',
		escalated: 'Escalated',
		grouped: 'Grouped'
	};
	return known[action] ?? action.replace(/_/g, ' ');
}
