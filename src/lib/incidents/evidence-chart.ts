// What to draw for an incident: pure chart models built from its evidence and the stored windows
// around it. The page's SVG components only lay these out.
import type { EvidenceSpanWindows } from './evidence-chart-rates';
import { burstCharts, driftCharts } from './evidence-chart-rates';
import { auxName, percent, stateName, utcClock } from './words';
import { listAt, numAt, numbersAt, objAt, strAt } from './read';
import type { EvidenceWindow } from './evidence-window';

export type CountBar = {
	fromSeq: number;
	toSeq: number;
	from_ms: number;
	to_ms: number;
	observed: number;
	/** The prediction, and the range the model allows around it (null without a model). */
	expected: number | null;
	lower: number | null;
	upper: number | null;
	/** The windows the evidence comes from. */
	focus: boolean;
};

export type Chart =
	| { type: 'counts'; title: string; yLabel: string; bars: CountBar[]; alt: string; note?: string }
	| {
			type: 'level';
			title: string;
			yLabel: string;
			points: { seq: number; t_ms: number; value: number }[];
			limits: { value: number; label: string; role: 'open' | 'clear' }[];
			focus: { from_ms: number; to_ms: number } | null;
			alt: string;
	  }
	| { type: 'cusum'; title: string; points: { seq: number; t_ms: number; S: number }[]; h: number; alt: string; note: string }
	| { type: 'shares'; title: string; shares: number[]; expected: number; alt: string };

export type ChartInput = {
	kind: string;
	key?: string | null;
	evidence: Record<string, unknown>;
	windows: EvidenceWindow[];
	focus: { fromSeq: number; toSeq: number } | null;
	states: number;
};

export function evidenceCharts(input: ChartInput): Chart[] {
	const { kind, evidence } = input;
	if (strAt(evidence, 'reason')) return [];
	switch (kind) {
		case 'rate_drift':
			return driftCharts(input as EvidenceSpanWindows);
		case 'switching_burst':
			return burstCharts(input as EvidenceSpanWindows);
		case 'lock_lost':
			return [lockChart(input)];
		case 'aux_limit':
			return auxChart(input);
		case 'occupancy_imbalance':
			return occupancyCharts(input);
		default:
			return [];
	}
}

function focusMs(input: ChartInput): { from_ms: number; to_ms: number } | null {
	if (!input.focus) return null;
	const inside = input.windows.filter((w) => w.seq >= input.focus!.fromSeq && w.seq <= input.focus!.toSeq);
	if (inside.length === 0) return null;
	return { from_ms: inside[0].t_ms - inside[0].window_s * 1000, to_ms: inside.at(-1)!.t_ms };
}

function lockChart(input: ChartInput): Chart {
	const ev = input.evidence;
	const threshold = numAt(ev, 'threshold');
	const clear = numAt(ev, 'clearThreshold');
	const limits: { value: number; label: string; role: 'open' | 'clear' }[] = [];
	if (threshold !== null) limits.push({ value: threshold, label: `opens below ${threshold}`, role: 'open' });
	if (clear !== null && clear !== threshold) limits.push({ value: clear, label: `clears at ${clear}`, role: 'clear' });
	const points = input.windows.map((w) => ({ seq: w.seq, t_ms: w.t_ms, value: w.lock }));
	const low = points.filter((p) => threshold !== null && p.value < threshold).length;
	return {
		type: 'level',
		title: 'Lock quality per window',
		yLabel: 'lock quality (0 to 1)',
		points,
		limits,
		focus: focusMs(input),
		alt: `Lock quality in ${points.length} windows${points.length ? ` from ${utcClock(points[0].t_ms)} to ${utcClock(points.at(-1)!.t_ms)}` : ''}; ${low} of them below ${threshold ?? 'the threshold'}.`
	};
}

function auxChart(input: ChartInput): Chart[] {
	const ev = input.evidence;
	const raw = strAt(ev, 'name') ?? input.key ?? '';
	if (!raw) return [];
	const { name, unit } = auxName(raw);
	const limit = objAt(ev, 'limit');
	const limits: { value: number; label: string; role: 'open' | 'clear' }[] = [];
	const u = unit ? ` ${unit}` : '';
	const above = numAt(limit, 'above');
	const below = numAt(limit, 'below');
	if (above !== null) limits.push({ value: above, label: `limit ${above}${u}`, role: 'open' });
	if (below !== null) limits.push({ value: below, label: `limit ${below}${u}`, role: 'open' });
	const clearBelow = numAt(limit, 'clearBelow');
	const clearAbove = numAt(limit, 'clearAbove');
	if (clearBelow !== null && clearBelow !== above) limits.push({ value: clearBelow, label: `clears at ${clearBelow}${u}`, role: 'clear' });
	if (clearAbove !== null && clearAbove !== below) limits.push({ value: clearAbove, label: `clears at ${clearAbove}${u}`, role: 'clear' });
	const points = input.windows.flatMap((w) => {
		const v = w.aux?.[raw];
		return typeof v === 'number' && Number.isFinite(v) ? [{ seq: w.seq, t_ms: w.t_ms, value: v }] : [];
	});
	// Without stored windows the evidence's own values still show the excursion.
	const fallback = points.length
		? points
		: listAt(ev, 'values').map((v) => ({ seq: numAt(v, 'seq') ?? 0, t_ms: numAt(v, 't_ms') ?? 0, value: numAt(v, 'value') ?? 0 }));
	const title = `${name.charAt(0).toUpperCase()}${name.slice(1)} per window`;
	return [
		{
			type: 'level',
			title,
			yLabel: unit ? `${name} (${unit})` : name,
			points: fallback,
			limits,
			focus: focusMs(input),
			alt: `${title}: ${fallback.length} windows against ${limits.map((l) => l.label).join(' and ') || 'its limits'}.`
		}
	];
}

function occupancyCharts(input: ChartInput): Chart[] {
	const ev = input.evidence;
	const fractions = numbersAt(ev, 'fractions');
	if (!fractions || fractions.length === 0) return [];
	const K = fractions.length;
	const expected = numAt(ev, 'expectedFraction') ?? 1 / K;
	const words = fractions.map((f, i) => `${stateName(i, K)} ${percent(f)}`).join(', ');
	return [
		{
			type: 'shares',
			title: 'Share of shots per phase state against equal filling',
			shares: fractions,
			expected,
			alt: `Shares per phase state: ${words}; equal filling is ${percent(expected)} each.`
		}
	];
}
