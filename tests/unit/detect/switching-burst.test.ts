// switching_burst on hand-built windows. Thresholds are recomputed here from the Poisson
// distribution by direct summation of its terms (not through the stats module), and the level
// from the budget's definition: α per window = window_s / (days·86 400 s), split equally between
// the tests run on that window (Bonferroni).
import { describe, expect, it } from 'vitest';
import { DetectorEngine, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { flatSwitching, run6 } from './models';
import { frame } from './frames';

/** P(K ≥ k | μ) = 1 − Σ_{j<k} e^{−μ} μ^j / j!, summed in log space (k small). */
function upperTail(k: number, mu: number): number {
	let sum = 0;
	let term = Math.exp(-mu);
	for (let j = 0; j < k; j++) {
		sum += term;
		term *= mu / (j + 1);
	}
	// For tails far below 1e-10 sum the upper terms instead, to keep relative precision.
	if (1 - sum > 1e-10) return 1 - sum;
	let upper = 0;
	term = Math.exp(-mu + k * Math.log(mu) - lnFactorial(k));
	for (let j = k; term > upper * 1e-17; j++) {
		upper += term;
		term *= mu / (j + 1);
	}
	return upper;
}
const lnFactorial = (n: number) => {
	let s = 0;
	for (let i = 2; i <= n; i++) s += Math.log(i);
	return s;
};
const threshold = (mu: number, alpha: number) => {
	let k = 0;
	while (upperTail(k, mu) > alpha) k++;
	return k;
};

const win = (seq: number, switches: number, opts: Partial<Frame> = {}): Frame => ({ ...frame(seq, 0.95), switches, ...opts });
const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const burstEvents = (events: DetectorEvent[]) => events.filter((e) => e.kind === 'switching_burst');
const calm = (from: number, n: number, switches = 2) => Array.from({ length: n }, (_, i) => win(from + i, switches));

const ALPHA_WINDOW = 1 / (30 * 86_400); // default budget, 1 s windows

function allFinite(value: unknown): boolean {
	if (typeof value === 'number') return Number.isFinite(value);
	if (Array.isArray(value)) return value.every(allFinite);
	if (value && typeof value === 'object') return Object.values(value).every(allFinite);
	return true;
}

describe('switching_burst, single window', () => {
	const run = run6({ switching: flatSwitching(2) });
	// After 10 calm windows two tests run per window (window and horizon): α = α_window / 2.
	const alpha = ALPHA_WINDOW / 2;
	const k = threshold(2, alpha);

	it('the count that opens comes from the budget: k − 1 switches do not, k do', () => {
		expect(k).toBeGreaterThan(8);
		const below = new DetectorEngine({}, run);
		expect(burstEvents(feed(below, [...calm(1, 10), win(11, k - 1)]))).toEqual([]);
		const at = new DetectorEngine({}, run);
		const events = burstEvents(feed(at, [...calm(1, 10), win(11, k)]));
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({ type: 'open', kind: 'switching_burst', key: 'switching', severity: 'critical', seq: 11 });
	});

	it('carries the windows, observed against expected, p against α, the rule and the model', () => {
		const events = burstEvents(feed(new DetectorEngine({ switching_burst: { version: 4 } }, run), [...calm(1, 10), win(11, k + 3)]));
		const ev = events[0].evidence as Record<string, any>;
		expect(ev).toMatchObject({ rule: 'switching_burst', version: 4, process: 'switching', testsThisWindow: 2, correction: 'bonferroni' });
		expect(ev.alphaWindow).toBeCloseTo(ALPHA_WINDOW, 15);
		expect(ev.worst).toMatchObject({
			scope: 'window',
			observed: k + 3,
			expected: 2,
			fromSeq: 11,
			toSeq: 11,
			windows: 1,
			thresholdCount: k
		});
		expect(ev.worst.pValue / upperTail(k + 3, 2)).toBeCloseTo(1, 6);
		expect(ev.worst.alpha).toBeCloseTo(alpha, 15);
		expect(ev.tests[1]).toMatchObject({ scope: 'horizon', observed: 20 + k + 3, expected: 22, fromSeq: 1, toSeq: 11, windows: 11 });
		expect(ev.rateModel).toMatchObject({ process: 'switching', W0_per_s: 2, A: 0 });
		expect(ev.temperature).toEqual({ T_mK: 20, measured: false });
		if (events[0].type === 'open') expect(events[0].summary).toMatch(/switches in window 11 where the rate model predicts 2/);
	});

	it('the first window alone runs one test, at the whole α of the window', () => {
		const k1 = threshold(2, ALPHA_WINDOW);
		expect(burstEvents(new DetectorEngine({}, run).onFrame(win(1, k1 - 1)))).toEqual([]);
		const events = burstEvents(new DetectorEngine({}, run).onFrame(win(1, k1)));
		expect((events[0].evidence as any).testsThisWindow).toBe(1);
	});

	it('clears after clearWindows quiet windows, and not before', () => {
		const engine = new DetectorEngine({ switching_burst: { clearWindows: 30 } }, run);
		feed(engine, [...calm(1, 10), win(11, k + 2)]);
		const events = burstEvents(feed(engine, calm(12, 120)));
		expect(events).toHaveLength(1);
		// Quiet: both the window (2 of 2, p = 0.59) and the horizon of the last ≤ 60 windows have
		// p ≥ clearPValue = 0.01. The burst keeps the horizon loud for a while after it.
		let firstQuiet = 12;
		const horizonP = (seq: number) => {
			const n = Math.min(60, seq);
			return upperTail(2 * n + k, 2 * n);
		};
		while (horizonP(firstQuiet) < 0.01) firstQuiet++;
		expect(firstQuiet).toBeGreaterThan(12);
		expect(events[0]).toMatchObject({ type: 'clear', seq: firstQuiet + 29 });
	});

	it('a loud window while open starts the quiet count again', () => {
		const e2 = new DetectorEngine({ switching_burst: { clearWindows: 5, horizonWindows: 0 } }, run);
		feed(e2, [...calm(1, 10), win(11, threshold(2, ALPHA_WINDOW)), ...calm(12, 3), win(15, 8)]);
		// P(K ≥ 8 | 2) ≈ 0.0011 < clearPValue 0.01: not quiet, though above α: no new opening
		expect(upperTail(8, 2)).toBeLessThan(0.01);
		expect(upperTail(8, 2)).toBeGreaterThan(ALPHA_WINDOW);
		const events = burstEvents(feed(e2, calm(16, 5)));
		expect(events).toMatchObject([{ type: 'clear', seq: 20 }]);
	});
});

describe('switching_burst, horizon', () => {
	const run = run6({ switching: flatSwitching(2) });

	it('a moderate excess no single window shows opens over the horizon', () => {
		// 4 switches where 2 are expected: P = 0.14 per window, nothing on its own
		expect(upperTail(4, 2)).toBeGreaterThan(0.1);
		const events = burstEvents(feed(new DetectorEngine({}, run), calm(1, 60, 4))).filter((e) => e.type === 'open');
		expect(events).toHaveLength(1);
		const ev = events[0].evidence as any;
		expect(ev.worst.scope).toBe('horizon');
		const n = ev.worst.windows;
		// the first horizon whose tail falls below α = α_window/2
		let first = 2;
		while (upperTail(4 * first, 2 * first) >= ALPHA_WINDOW / 2) first++;
		expect(n).toBe(first);
		expect(ev.worst).toMatchObject({ observed: 4 * n, expected: 2 * n, fromSeq: 1, toSeq: n });
	});

	it('horizonWindows 0 tests single windows only', () => {
		expect(burstEvents(feed(new DetectorEngine({ switching_burst: { horizonWindows: 0 } }, run), calm(1, 200, 4)))).toEqual([]);
	});

	it('a gap in seq: the horizon holds the windows that arrived, with their exposure', () => {
		const fs = [...calm(1, 10, 4), ...calm(500, 40, 4)];
		const events = burstEvents(feed(new DetectorEngine({}, run), fs));
		const ev = events[0].evidence as any;
		expect(ev.worst.fromSeq).toBe(1);
		expect(ev.worst.toSeq).toBeGreaterThanOrEqual(500);
		expect(ev.worst.exposure_s).toBe(ev.worst.windows);
		expect(ev.worst.expected).toBe(2 * ev.worst.windows);
	});
});

describe('switching_burst, edges', () => {
	it('zero exposure: not tested, not added to the horizon, no NaN', () => {
		const run = run6({ switching: flatSwitching(2) });
		const engine = new DetectorEngine({}, run);
		expect(burstEvents(feed(engine, [...calm(1, 5), win(6, 500, { dwell_s: 0 })]))).toEqual([]);
		const events = burstEvents(feed(engine, [win(7, 30)]));
		const ev = events[0].evidence as any;
		expect(ev.tests[1]).toMatchObject({ scope: 'horizon', windows: 6, observed: 10 + 30, expected: 12 });
		expect(allFinite(ev)).toBe(true);
	});

	it('a prediction that underflows to zero: any switch has p = 0 and opens, evidence stays finite', () => {
		const frozen = { process: 'switching' as const, W0_per_s: 1, A: 2000, mode_GHz: 5, nominal_mK: 20 };
		const events = burstEvents(feed(new DetectorEngine({}, run6({ switching: frozen })), [win(1, 0), win(2, 0), win(3, 1)]));
		expect(events).toHaveLength(1);
		const ev = events[0].evidence as any;
		expect(ev.worst).toMatchObject({ expected: 0, observed: 1, pValue: 0, thresholdCount: 1 });
		expect(allFinite(ev)).toBe(true);
		expect(JSON.parse(JSON.stringify(ev))).toEqual(ev);
	});

	it('a single huge window: judged on its own exposure, and it spends its share of the budget', () => {
		const run = run6({ switching: flatSwitching(2) });
		const hour = (seq: number, switches: number): Frame => ({
			...win(seq, switches),
			window_s: 3600,
			dwell_s: 3600,
			t: frame(seq, 0).t + seq * 3_600_000
		});
		const alpha = 3600 / (30 * 86_400); // one test: the first window
		// 7200 expected; a +1.2σ excess is nothing, a +4.7σ one is
		expect(burstEvents(new DetectorEngine({}, run).onFrame(hour(1, 7300)))).toEqual([]);
		const events = burstEvents(new DetectorEngine({}, run).onFrame(hour(1, 7540)));
		expect(events).toHaveLength(1);
		const ev = events[0].evidence as any;
		expect(ev.alphaWindow).toBeCloseTo(alpha, 12);
		// Normal approximation with continuity correction as an independent check on the tail.
		const z = (7540 - 0.5 - 7200) / Math.sqrt(7200);
		const normalTail = 0.5 * erfc(z / Math.SQRT2);
		expect(ev.worst.pValue / normalTail).toBeGreaterThan(0.5);
		expect(ev.worst.pValue / normalTail).toBeLessThan(2);
		expect(ev.worst.pValue).toBeLessThan(alpha);
	});

	it('missing aux: the nominal temperature stands in and says so', () => {
		const run = run6({ switching: { process: 'switching', W0_per_s: 74.2, A: 6, mode_GHz: 1, nominal_mK: 20 } });
		const events = burstEvents(feed(new DetectorEngine({}, run), [win(1, 1), win(2, 1, { aux: { bias_uV: 3 } }), win(3, 40)]));
		expect((events[0].evidence as any).temperature).toEqual({ T_mK: 20, measured: false });
	});

	it('stays idle without a rate model', () => {
		expect(burstEvents(feed(new DetectorEngine({}, run6()), [...calm(1, 10), win(11, 500)]))).toEqual([]);
	});

	it('escapes over vacuum_s are tested when the rule says the run is locked', () => {
		const escape = { process: 'escape' as const, W0_per_s: 5, A: 0, mode_GHz: 5, nominal_mK: 20, W0_sigma: 0, A_sigma: 0 };
		const run = run6({ switching: flatSwitching(2), escape });
		const fs = [...calm(1, 10).map((f) => ({ ...f, vacuum_s: 0.1 })), win(11, 2, { vacuum_s: 0.1, escapes: 9 })];
		expect(burstEvents(feed(new DetectorEngine({}, run), fs))).toEqual([]);
		const events = burstEvents(feed(new DetectorEngine({ switching_burst: { locked: true } }, run), fs));
		expect(events).toMatchObject([{ type: 'open', key: 'escape' }]);
		const ev = events[0].evidence as any;
		// four tests this window: switches and escapes, each over the window and the horizon
		expect(ev.testsThisWindow).toBe(4);
		expect(ev.worst).toMatchObject({ process: 'escape', observed: 9, exposure_s: 0.1 });
		expect(ev.worst.expected).toBeCloseTo(0.5, 12);
		expect(ev.worst.pValue / upperTail(9, 0.5)).toBeCloseTo(1, 6);
	});

	it('a rate model removed mid-run clears its condition', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(2) }));
		feed(engine, [...calm(1, 10), win(11, 40)]);
		expect(engine.openConditions().filter((c) => c.kind === 'switching_burst')).toMatchObject([{ key: 'switching' }]);
		const events = burstEvents(engine.setRun({ rateModels: {} }, 12_000));
		expect(events).toMatchObject([
			{ type: 'clear', kind: 'switching_burst', key: 'switching', evidence: { reason: 'rate_model_removed' } }
		]);
		expect(burstEvents(feed(engine, [win(12, 500)]))).toEqual([]);
	});
});

/** Complementary error function (Abramowitz & Stegun 7.1.26, |error| < 1.5e-7; coefficients from memory), for the check above. */
function erfc(x: number): number {
	const t = 1 / (1 + 0.3275911 * x);
	const poly = t * (0.254829592 + t * (-0.284496736 + t * (1.421413741 + t * (-1.453152027 + t * 1.061405429))));
	return poly * Math.exp(-x * x);
}
