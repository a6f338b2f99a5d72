// Charts for the rate kinds: counts per window against the prediction and its allowed range, and
// for a drift the CUSUM statistic against its decision interval. The evidence keeps only the
// statistic's end value, so its path is recomputed here over the stored windows with the same
// step the detector uses (stats/cusum.ts) and the same pooling into steps (rate-drift.ts).
import { MAX_WINDOWS_PER_STEP } from '../detect/cusum-design';
import { poissonCusumStep } from '../stats/cusum';
import type { Chart, ChartInput, CountBar } from './evidence-chart';
import { countOf, exposureOf, predictorFromEvidence, type EvidenceWindow, type Process } from './evidence-window';
import { numAt, objAt, strAt } from './read';
import { num, utcClock } from './words';

export type EvidenceSpanWindows = ChartInput;

/** Bars are grouped so that a chart never draws more than this many. */
export const MAX_BARS = 120;

type PerWindow = { w: EvidenceWindow; observed: number; expected: number | null; lower: number | null; upper: number | null };

function groupBars(rows: PerWindow[], focus: ChartInput['focus']): CountBar[] {
	const size = Math.max(1, Math.ceil(rows.length / MAX_BARS));
	const bars: CountBar[] = [];
	for (let i = 0; i < rows.length; i += size) {
		const g = rows.slice(i, i + size);
		// Per window (the group's mean), so a short last group reads on the same scale as the rest.
		const sum = (f: (r: PerWindow) => number | null) =>
			g.every((r) => f(r) !== null) ? g.reduce((a, r) => a + f(r)!, 0) / g.length : null;
		const first = g[0].w;
		const last = g.at(-1)!.w;
		bars.push({
			fromSeq: first.seq,
			toSeq: last.seq,
			from_ms: first.t_ms - first.window_s * 1000,
			to_ms: last.t_ms,
			observed: g.reduce((a, r) => a + r.observed, 0) / g.length,
			expected: sum((r) => r.expected),
			lower: sum((r) => r.lower),
			upper: sum((r) => r.upper),
			focus: focus !== null && g.some((r) => r.w.seq >= focus.fromSeq && r.w.seq <= focus.toSeq)
		});
	}
	return bars;
}

const noun = (p: Process) => (p === 'escape' ? 'escapes' : 'switches');

/**
 * One factor that makes the recomputed prediction over the evidence's windows equal to what the
 * detector recorded for them: it absorbs an operating-point scale of escape models the evidence
 * does not carry, and is 1 when the model is the one recomputed here.
 */
function calibration(
	windows: EvidenceWindow[],
	fromSeq: number,
	toSeq: number,
	recorded: number | null,
	predict: (w: EvidenceWindow) => number
): number {
	if (recorded === null) return 1;
	const sum = windows.filter((w) => w.seq >= fromSeq && w.seq <= toSeq).reduce((a, w) => a + predict(w), 0);
	return sum > 0 && recorded > 0 ? recorded / sum : 1;
}

function countsAlt(bars: CountBar[], p: Process): string {
	const focus = bars.filter((b) => b.focus);
	const windows = (b: CountBar) => b.toSeq - b.fromSeq + 1;
	const obs = focus.reduce((a, b) => a + b.observed * windows(b), 0);
	const exp = focus.reduce((a, b) => a + (b.expected ?? 0) * windows(b), 0);
	const span = bars.length ? ` from ${utcClock(bars[0].from_ms)} to ${utcClock(bars.at(-1)!.to_ms)}` : '';
	return `${noun(p)} per window${span}; over the marked windows ${num(Math.round(obs))} were counted where ${num(exp, 3)} were predicted.`;
}

export function driftCharts(input: ChartInput): Chart[] {
	const ev = input.evidence;
	const p: Process = strAt(ev, 'process') === 'escape' ? 'escape' : 'switching';
	const predict = predictorFromEvidence(ev, p);
	const since = objAt(ev, 'sinceChange');
	if (!predict || input.windows.length === 0) return [];
	const nominal = strAt(ev, 'prediction') === 'nominal';
	const chartOf = (w: EvidenceWindow) => (nominal ? predict(w).atNominal : predict(w).atTemperature);
	const fromSeq = numAt(since, 'fromSeq') ?? input.focus?.fromSeq ?? input.windows[0].seq;
	const toSeq = numAt(since, 'toSeq') ?? input.focus?.toSeq ?? input.windows.at(-1)!.seq;
	const recorded = nominal ? numAt(since, 'expectedAtNominal') : numAt(since, 'expected');
	const k = calibration(input.windows, fromSeq, toSeq, recorded, chartOf);
	const ratioUpper = numAt(ev, 'reference.ratioUpper') ?? 1;
	const ratioLower = numAt(ev, 'reference.ratioLower') ?? 1;
	const rows: PerWindow[] = input.windows.map((w) => {
		const e = chartOf(w) * k;
		return { w, observed: countOf(w, p), expected: e, lower: e * ratioLower, upper: e * ratioUpper };
	});
	const bars = groupBars(rows, { fromSeq, toSeq });
	const charts: Chart[] = [
		{
			type: 'counts',
			title: `${p === 'escape' ? 'Escapes' : 'Switches'} per window against the prediction`,
			yLabel: `${noun(p)} per window`,
			bars,
			alt: countsAlt(bars, p),
			note: groupNote(bars)
		}
	];
	const cusum = cusumPath(input, rows, fromSeq, toSeq);
	if (cusum) charts.push(cusum);
	return charts;
}

function cusumPath(input: ChartInput, rows: PerWindow[], fromSeq: number, toSeq: number): Chart | null {
	const ev = input.evidence;
	const h = numAt(ev, 'decisionInterval');
	const rho = numAt(ev, 'designRatio');
	const minStep = numAt(ev, 'minExpectedPerStep') ?? 0;
	const recorded = numAt(ev, 'statistic');
	if (h === null || rho === null || rho === 1 || recorded === null) return null;
	const up = strAt(ev, 'direction') !== 'down';
	const p: Process = strAt(ev, 'process') === 'escape' ? 'escape' : 'switching';
	const points: { seq: number; t_ms: number; S: number }[] = [];
	let S = 0;
	let atOpening: number | null = null;
	let block = { count: 0, chart: 0, lower: 0, upper: 0, n: 0 };
	for (const r of rows) {
		const { w } = r;
		if (w.seq >= fromSeq && exposureOf(w, p) > 0) {
			block = {
				count: block.count + r.observed,
				chart: block.chart + r.expected!,
				lower: block.lower + r.lower!,
				upper: block.upper + r.upper!,
				n: block.n + 1
			};
			if (Math.min(block.chart, block.lower) >= minStep) {
				S = poissonCusumStep(S, block.count, up ? block.upper : block.lower, rho);
				// While open the detector holds the statistic at most at h.
				if (w.seq > toSeq) S = Math.min(S, h);
				block = { count: 0, chart: 0, lower: 0, upper: 0, n: 0 };
			} else if (block.n >= MAX_WINDOWS_PER_STEP) block = { count: 0, chart: 0, lower: 0, upper: 0, n: 0 };
		}
		if (w.seq === toSeq) atOpening = S;
		points.push({ seq: w.seq, t_ms: w.t_ms, S });
	}
	const agrees = atOpening !== null && Math.abs(atOpening - recorded) <= 0.02 * Math.max(1, recorded);
	const note = agrees
		? `Recomputed from the stored windows; it reaches ${num(atOpening!, 3)} at the opening, as the detector recorded.`
		: `Recomputed from the stored windows with the model the detector recorded; the detector’s own value at the opening was ${num(recorded, 3)}${atOpening === null ? '' : `, this path gives ${num(atOpening, 3)}`} (windows missing or a model changed since).`;
	return {
		type: 'cusum',
		title: `Drift statistic (${up ? 'rate going up' : 'rate going down'}) against its decision limit`,
		points,
		h,
		alt: `Drift statistic from ${utcClock(points[0]?.t_ms ?? 0)}: zero before the change, rising to ${num(atOpening ?? recorded, 3)} against a decision limit of ${num(h, 3)}.`,
		note
	};
}

export function burstCharts(input: ChartInput): Chart[] {
	const ev = input.evidence;
	const p: Process = strAt(ev, 'process') === 'escape' ? 'escape' : 'switching';
	const predict = predictorFromEvidence(ev, p);
	const worst = objAt(ev, 'worst');
	if (!predict || !worst || input.windows.length === 0) return [];
	const fromSeq = numAt(worst, 'fromSeq') ?? input.windows[0].seq;
	const toSeq = numAt(worst, 'toSeq') ?? fromSeq;
	const k = calibration(input.windows, fromSeq, toSeq, numAt(worst, 'expected'), (w) => predict(w).atTemperature);
	const expected = numAt(worst, 'expected') ?? 0;
	const tested = numAt(worst, 'testedAgainst') ?? expected;
	// The model's band is symmetric in ln W: its lower edge is as far below as the tested edge is above.
	const up = expected > 0 ? tested / expected : 1;
	const rows: PerWindow[] = input.windows.map((w) => {
		const e = predict(w).atTemperature * k;
		return { w, observed: countOf(w, p), expected: e, lower: e / up, upper: e * up };
	});
	const bars = groupBars(rows, { fromSeq, toSeq });
	return [
		{
			type: 'counts',
			title: `${p === 'escape' ? 'Escapes' : 'Switches'} per window against the prediction`,
			yLabel: `${noun(p)} per window`,
			bars,
			alt: countsAlt(bars, p),
			note: groupNote(bars)
		}
	];
}

function groupNote(bars: CountBar[]): string | undefined {
	if (!bars.some((b) => b.toSeq > b.fromSeq)) return undefined;
	return `Each bar is the mean of ${bars[0].toSeq - bars[0].fromSeq + 1} windows.`;
}
