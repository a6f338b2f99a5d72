// Axis ticks for a time view: round steps (seconds to days) so about `target` labels fit, and a
// label format that shows what changes at that step (date for days, seconds for short views).
import type { View } from './view';
import { clockText, displayTimeZone, hourMinuteText, zoneOffsetMinutes, zonedParts } from '../ui/zoned-time';

const S = 1000;
const M = 60 * S;
const H = 60 * M;
const D = 24 * H;
const STEPS_MS = [
	S,
	2 * S,
	5 * S,
	10 * S,
	15 * S,
	30 * S,
	M,
	2 * M,
	5 * M,
	10 * M,
	15 * M,
	30 * M,
	H,
	2 * H,
	3 * H,
	6 * H,
	12 * H,
	D,
	2 * D,
	7 * D
];

export type Tick = { t_ms: number; label: string };

const pad = (n: number) => String(n).padStart(2, '0');

export function timeTicks(v: View, target = 6, timeZone: string = displayTimeZone()): Tick[] {
	const span = v.to_ms - v.from_ms;
	const step = STEPS_MS.find((s) => span / s <= target) ?? STEPS_MS[STEPS_MS.length - 1];
	// Steps of hours and days fall on local boundaries, so shift by the zone before rounding.
	const shift = -zoneOffsetMinutes(v.from_ms, timeZone) * M;
	const first = Math.ceil((v.from_ms + shift) / step) * step - shift;
	const ticks: Tick[] = [];
	for (let t = first; t <= v.to_ms; t += step) {
		const d = zonedParts(t, timeZone);
		const hm = hourMinuteText(d);
		let label = hm;
		if (step < M) label = clockText(d);
		else if (step >= D || (d.hour === 0 && d.minute === 0)) label = `${pad(d.month)}-${pad(d.day)}${step < D ? ' ' + hm : ''}`;
		ticks.push({ t_ms: t, label });
	}
	return ticks;
}
