// Axis helpers for the small plain-SVG charts (evidence, phase space). A linear map and a few
// round ticks are a handful of lines; the charts render on the server too, so no browser-only
// chart package is involved.

/** Round tick values from 0 (or min) up to at least max: steps of 1, 2 or 5 × 10ⁿ. */
export function niceTicks(min: number, max: number, count = 4): number[] {
	if (!(max > min)) return [min];
	const raw = (max - min) / count;
	const mag = 10 ** Math.floor(Math.log10(raw));
	const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
	const ticks: number[] = [];
	for (let v = Math.floor(min / step) * step; v <= max + step * 1e-9; v += step) ticks.push(Number(v.toPrecision(12)));
	if (ticks.at(-1)! < max) ticks.push(Number((ticks.at(-1)! + step).toPrecision(12)));
	return ticks;
}

/** Maps [d0, d1] onto [r0, r1]. */
export function linear(d0: number, d1: number, r0: number, r1: number): (v: number) => number {
	const span = d1 - d0 || 1;
	return (v) => r0 + ((v - d0) / span) * (r1 - r0);
}

const pad = (n: number) => String(n).padStart(2, '0');

/** "02:14:05" in UTC, as the incident sentences give times. */
export function utcTick(ms: number): string {
	const d = new Date(ms);
	return `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())}`;
}

/** A tick label: at most three significant digits. */
export const tickLabel = (v: number) => (Math.abs(v) >= 1000 || v === 0 ? String(Math.round(v)) : String(Number(v.toPrecision(3))));
