// Numbers, times, rates and names as a person reads them in an incident's sentences: no field
// names, units spelled the usual way, times in UTC so an e-mail reads the same everywhere.
import { formatDuration, formatRate } from '../ui/format';

/** A plain number with `significant` digits: 4.1, 0.031, 1.2 × 10⁻⁹. */
export function num(x: number | null | undefined, significant = 3): string {
	if (x == null || Number.isNaN(x)) return 'unknown';
	if (!Number.isFinite(x)) return x > 0 ? 'unbounded' : 'minus unbounded';
	if (Number.isInteger(x) && Math.abs(x) < 1e6) return String(x);
	return formatRate(x, significant);
}

/** A share as a percentage: 0.312 → "31 %"; shares under 20 % keep a decimal ("16.7 %"). */
export function percent(share: number | null | undefined): string {
	if (share == null || !Number.isFinite(share)) return 'unknown';
	const p = 100 * share;
	return `${Math.abs(p) < 20 ? Number(p.toFixed(1)) : Math.round(p)} %`;
}

/** "(1.6–2.5)", or "(1.6 and above)" for an interval with no upper end. */
export function interval(lower: number | null | undefined, upper: number | null | undefined): string {
	if (lower == null && upper == null) return '';
	if (upper == null || !Number.isFinite(upper)) return `(${num(lower ?? 0, 2)} and above)`;
	return `(${num(lower ?? 0, 2)}–${num(upper, 2)})`;
}

const pad = (n: number) => String(n).padStart(2, '0');

/** "02:14:05 UTC". */
export function utcClock(ms: number): string {
	const d = new Date(ms);
	return `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())} UTC`;
}

const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'];

/** "02:14:05 UTC on 15 June 2025". */
export function utcWhen(ms: number): string {
	const d = new Date(ms);
	return `${utcClock(ms)} on ${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]} ${d.getUTCFullYear()}`;
}

/** "90 s", "3 min 05 s", "2 h 14 min". */
export const duration = (seconds: number) => formatDuration(seconds);

export type CountNoun = { one: string; many: string };
export const SWITCHES: CountNoun = { one: 'switch', many: 'switches' };
export const ESCAPES: CountNoun = { one: 'escape', many: 'escapes' };
export const WINDOWS: CountNoun = { one: 'window', many: 'windows' };

/** "1 switch", "17 switches". */
export function count(n: number, noun: CountNoun): string {
	return `${num(n)} ${n === 1 ? noun.one : noun.many}`;
}

/**
 * A rate in the unit that gives a readable number: per second when at least one a second, per
 * minute when at least one a minute, else per hour.
 */
export function rateUnit(perSecondValues: number[]): { factor: number; unit: string } {
	const top = Math.max(0, ...perSecondValues.filter((v) => Number.isFinite(v)));
	if (top >= 1) return { factor: 1, unit: 'second' };
	if (top >= 1 / 60) return { factor: 60, unit: 'minute' };
	return { factor: 3600, unit: 'hour' };
}

/**
 * "4.1 switches per minute, expected 1.2 (0.8–1.7)": an observed rate against the predicted one
 * and the range the model allows, all over the same exposure.
 */
export function rateAgainst(
	noun: CountNoun,
	observed: number,
	expected: number,
	exposure_s: number,
	allowed?: { lower?: number | null; upper?: number | null }
): string {
	if (!(exposure_s > 0)) return `${count(observed, noun)} where ${num(expected, 2)} were expected`;
	const per = (n: number) => n / exposure_s;
	const { factor, unit } = rateUnit([per(observed), per(expected)]);
	// A model that states no uncertainty allows only its prediction: no range to show.
	const hasRange =
		allowed && allowed.lower != null && allowed.upper != null && Math.abs(allowed.upper - allowed.lower) > 1e-9 * Math.max(1, expected);
	const band =
		hasRange && allowed
			? ` ${interval(allowed.lower == null ? null : per(allowed.lower) * factor, allowed.upper == null ? null : per(allowed.upper) * factor)}`
			: '';
	return `${num(per(observed) * factor, 2)} ${noun.many} per ${unit}, expected ${num(per(expected) * factor, 2)}${band}`;
}

/** A chance in words: "3.1 × 10⁻⁹", "0.042". */
export const chance = (p: number | null | undefined) => (p == null ? 'unknown' : p < 1e-3 ? formatRate(p, 2) : num(p, 2));

// Aux names are the agent's (unit after the last underscore); the common ones have plain names.
const AUX_NAMES: Record<string, string> = {
	mxc_mK: 'mixing-chamber temperature',
	pump_dBm: 'pump power',
	bias_uV: 'bias voltage',
	still_mK: 'still temperature'
};
const UNITS: Record<string, string> = {
	mK: 'mK',
	K: 'K',
	uV: 'µV',
	mV: 'mV',
	V: 'V',
	dBm: 'dBm',
	dB: 'dB',
	mW: 'mW',
	uW: 'µW',
	nW: 'nW',
	GHz: 'GHz',
	MHz: 'MHz',
	Hz: 'Hz',
	mbar: 'mbar',
	bar: 'bar',
	s: 's',
	ms: 'ms',
	A: 'A',
	mA: 'mA',
	uA: 'µA',
	pct: '%'
};

/** An aux value's name and unit for sentences: "mxc_mK" → { name: "mixing-chamber temperature", unit: "mK" }. */
export function auxName(raw: string): { name: string; unit: string } {
	const m = /^(.*?)[_-]([A-Za-z]+)$/.exec(raw);
	const unit = m && UNITS[m[2]] ? UNITS[m[2]] : '';
	const base = unit ? m![1] : raw;
	const name =
		AUX_NAMES[raw] ??
		base
			.replace(/[_-]+/g, ' ')
			.replace(/([a-z0-9])([A-Z])/g, '$1 $2')
			.toLowerCase();
	return { name, unit };
}

/** "31.2 mK" (or a bare number when the aux value has no unit). */
export const withUnit = (x: number | null | undefined, unit: string) => (unit ? `${num(x, 4)} ${unit}` : num(x, 4));

/** A phase state by number and angle: "state 2 (120°)". */
export const stateName = (i: number, K: number) => `state ${i} (${Math.round((360 * i) / K)}°)`;
