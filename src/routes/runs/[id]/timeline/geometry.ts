// Track geometry: every track draws in a 1000-unit-wide viewBox stretched to its width, so the
// tracks share one x mapping without measuring the page (text stays in HTML, never stretched).
import type { View } from '$lib/timeline/view';

export const TRACK_W = 1000;

export const xOf = (v: View, t_ms: number) => ((t_ms - v.from_ms) / (v.to_ms - v.from_ms)) * TRACK_W;

/** y in a track of height h for a value in [lo, hi] (top = hi), clamped to the track. */
export function yOf(value: number, lo: number, hi: number, h: number): number {
	const f = hi > lo ? (value - lo) / (hi - lo) : 0.5;
	return h - Math.min(1, Math.max(0, f)) * h;
}

/** SVG path of a band: upper edge left to right, lower edge back; one path per unbroken run. */
export function bandPath(points: { x0: number; x1: number; lo: number; hi: number }[]): string {
	if (points.length === 0) return '';
	const top = points.map((p, i) => `${i ? 'L' : 'M'}${p.x0.toFixed(2)},${p.hi.toFixed(2)}L${p.x1.toFixed(2)},${p.hi.toFixed(2)}`).join('');
	const bottom = [...points]
		.reverse()
		.map((p) => `L${p.x1.toFixed(2)},${p.lo.toFixed(2)}L${p.x0.toFixed(2)},${p.lo.toFixed(2)}`)
		.join('');
	return `${top}${bottom}Z`;
}

/** Splits consecutive items into runs broken wherever `keep` is false (no line across lost data). */
export function runsOf<T>(items: T[], keep: (item: T) => boolean): T[][] {
	const out: T[][] = [];
	let current: T[] = [];
	for (const item of items) {
		if (keep(item)) current.push(item);
		else if (current.length) {
			out.push(current);
			current = [];
		}
	}
	if (current.length) out.push(current);
	return out;
}

/** Upper end of a value axis: a little above the largest value, never zero. */
export function niceMax(values: number[]): number {
	const m = Math.max(0, ...values.filter((v) => Number.isFinite(v)));
	return m > 0 ? m * 1.1 : 1;
}
