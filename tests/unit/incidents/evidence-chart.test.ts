// Evidence charts on true evidence from the detector engine. The CUSUM path is checked against
// its definition, S ← max(0, S + k·ln ρ − μ(ρ − 1)) (Lucas 1985), summed by hand here, and
// against the end value the detector recorded.
import { describe, expect, it } from 'vitest';
import { DetectorEngine, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { evidenceCharts, type Chart } from '../../../src/lib/incidents/evidence-chart';
import { evidenceSeqSpan } from '../../../src/lib/incidents/evidence-span';
import type { EvidenceWindow } from '../../../src/lib/incidents/evidence-window';
import { frame } from '../detect/frames';
import { flatSwitching, noBaseline, run6 } from '../detect/models';

const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const opening = (events: DetectorEvent[], kind: string) => {
	const e = events.find((x) => x.type === 'open' && x.kind === kind);
	if (!e) throw new Error(`no ${kind} opening`);
	return e;
};
const asWindow = (f: Frame): EvidenceWindow => ({
	seq: f.seq,
	t_ms: f.t,
	window_s: f.window_s,
	lock: f.lock,
	switches: f.switches,
	escapes: f.escapes,
	dwell_s: f.dwell_s,
	vacuum_s: f.vacuum_s,
	aux: f.aux ?? null
});
const only = <T extends Chart['type']>(charts: Chart[], type: T) => charts.filter((c): c is Extract<Chart, { type: T }> => c.type === type);

describe('rate_drift evidence', () => {
	// One switch a window expected; from seq 21 on, two a window.
	const fs = Array.from({ length: 120 }, (_, i) => ({ ...frame(i + 1, 0.95), switches: i < 20 ? 1 : 2 }));
	const events = feed(
		new DetectorEngine({ switching_burst: { enabled: false }, rate_drift: noBaseline }, run6({ switching: flatSwitching(1) })),
		fs
	);
	const open = opening(events, 'rate_drift');
	const ev = open.evidence as any;
	const span = evidenceSeqSpan('rate_drift', ev)!;
	const windows = fs.filter((f) => f.seq >= span.fromSeq && f.seq <= span.toSeq).map(asWindow);
	const charts = evidenceCharts({
		kind: 'rate_drift',
		key: 'switching',
		evidence: ev,
		windows,
		focus: { fromSeq: span.focusFrom, toSeq: span.focusTo },
		states: 6
	});

	it('the span covers the windows since the change, with context before', () => {
		expect(span.focusTo).toBe(open.seq);
		expect(span.fromSeq).toBeLessThan(ev.sinceChange.fromSeq);
	});

	it('recomputes the CUSUM path: zero before the change, the definition after, the recorded value at the opening', () => {
		const [cusum] = only(charts, 'cusum');
		expect(cusum.h).toBe(ev.decisionInterval);
		let S = 0;
		for (const p of cusum.points) {
			if (p.seq < ev.sinceChange.fromSeq) {
				expect(p.S).toBe(0);
				continue;
			}
			if (p.seq > open.seq!) break;
			S = Math.max(0, S + 2 * Math.log(2) - 1 * (2 - 1));
			expect(p.S).toBeCloseTo(S, 9);
		}
		expect(cusum.points.find((p) => p.seq === open.seq)!.S).toBeCloseTo(ev.statistic, 9);
		expect(cusum.note).toContain('as the detector recorded');
		// held at h while open
		for (const p of cusum.points) if (p.seq > open.seq!) expect(p.S).toBeLessThanOrEqual(ev.decisionInterval + 1e-12);
	});

	it('draws each window’s count against the prediction of one a window, the change marked', () => {
		const [counts] = only(charts, 'counts');
		expect(counts.bars).toHaveLength(windows.length);
		for (const b of counts.bars) {
			expect(b.observed).toBe(b.fromSeq <= 20 ? 1 : 2);
			expect(b.expected).toBeCloseTo(1, 12);
			expect(b.focus).toBe(b.fromSeq >= ev.sinceChange.fromSeq && b.fromSeq <= open.seq!);
		}
	});
});

describe('switching_burst evidence', () => {
	it('bars grouped to at most 120, the burst window marked with its count', () => {
		const fs = Array.from({ length: 400 }, (_, i) => ({ ...frame(i + 1, 0.95), switches: i === 399 ? 14 : i % 2 }));
		const open = opening(
			feed(new DetectorEngine({ rate_drift: { enabled: false } }, run6({ switching: flatSwitching(0.5) })), fs),
			'switching_burst'
		);
		const windows = fs.map(asWindow);
		const [counts] = only(evidenceCharts({ kind: 'switching_burst', evidence: open.evidence, windows, focus: null, states: 6 }), 'counts');
		expect(counts.bars.length).toBeLessThanOrEqual(120);
		// each bar is its windows' mean, so bar × windows sums back to every switch sent
		expect(counts.bars.reduce((a, b) => a + b.observed * (b.toSeq - b.fromSeq + 1), 0)).toBeCloseTo(
			fs.reduce((a, f) => a + f.switches, 0),
			9
		);
		const last = counts.bars.at(-1)!;
		expect(last.focus).toBe(true);
		expect(last.expected).toBeCloseTo(0.5, 9);
	});
});

describe('lock_lost and occupancy evidence', () => {
	it('lock per window with the opening and clearing thresholds', () => {
		const fs = [0.9, 0.9, 0.42, 0.38, 0.31, 0.27, 0.22].map((l, i) => frame(i + 1, l));
		const open = opening(feed(new DetectorEngine({}, run6()), fs), 'lock_lost');
		const span = evidenceSeqSpan('lock_lost', open.evidence)!;
		const [level] = only(
			evidenceCharts({
				kind: 'lock_lost',
				evidence: open.evidence,
				windows: fs.map(asWindow),
				focus: { fromSeq: span.focusFrom, toSeq: span.focusTo },
				states: 6
			}),
			'level'
		);
		expect(level.points.map((p) => p.value)).toEqual([0.9, 0.9, 0.42, 0.38, 0.31, 0.27, 0.22]);
		expect(level.limits.map((l) => l.value)).toContain((open.evidence as any).threshold);
		expect(level.focus).not.toBeNull();
	});

	it('shares per state against 1/K', () => {
		const ev = { rule: 'occupancy_imbalance', version: 1, fractions: [0.4, 0.12, 0.12, 0.12, 0.12, 0.12], expectedFraction: 1 / 6 };
		const [shares] = only(
			evidenceCharts({ kind: 'occupancy_imbalance', key: 'states', evidence: ev, windows: [], focus: null, states: 6 }),
			'shares'
		);
		expect(shares.shares).toEqual(ev.fractions);
		expect(shares.expected).toBeCloseTo(1 / 6, 12);
		expect(shares.alt).toContain('state 0 (0°) 40 %');
	});
});
