// rate_drift's decision intervals at the step's own predicted count and window length: checked
// against the definition of the design (the in-control run length of each side equals twice the
// budget in steps; Lucas & Crosier 1982 for the split between the sides) through the Poisson
// CUSUM's exact run length (stats/cusum.ts, itself checked against a lattice chain and Monte Carlo).
import { describe, expect, it } from 'vitest';
import { DetectorEngine } from '../../../src/lib/detect';
import { designAt, designFor, type DesignInputs } from '../../../src/lib/detect/cusum-design';
import { poissonCusumArl } from '../../../src/lib/stats/cusum';
import type { Frame } from '../../../src/lib/protocol/frame';
import { flatSwitching, run6 } from './models';
import { frame } from './frames';

const DAYS = 30;
const inputs: DesignInputs = { ratioUp: 2, ratioDown: 0.5, minExpectedPerStep: 0.5, falseAlarmEvery_days: DAYS, window_s: 1 };
const targetPerSide = (window_s: number, windowsPerStep = 1) => (2 * DAYS * 86_400) / window_s / windowsPerStep;

describe('decision interval at the actual counts per step', () => {
	it('on a grid point it is the grid design', () => {
		const d = designAt(1, 1, inputs);
		expect(d).toEqual(designFor(0, 1, inputs));
		expect(d.targetStepsPerSide).toBe(targetPerSide(1));
	});

	it('between grid points h is interpolated in ln μ from the two either side', () => {
		const mu = 0.3; // 8·log2(0.3) = −13.9: between bands −14 and −13
		const low = designFor(-14, 1, inputs);
		const high = designFor(-13, 1, inputs);
		const d = designAt(mu, 1, inputs);
		const t = 8 * Math.log2(mu) + 14;
		expect(d.muStep).toBe(mu);
		expect(d.hUp).toBeCloseTo((1 - t) * low.hUp + t * high.hUp, 12);
		expect(d.hDown).toBeCloseTo((1 - t) * low.hDown + t * high.hDown, 12);
	});

	it('below one count per step the in-control run length at the interpolated h is within 2 % of the target', () => {
		for (const mu of [0.07, 0.3]) {
			const d = designAt(mu, 1, inputs);
			expect(Math.abs(poissonCusumArl(d.hUp, 2, mu) / d.targetStepsPerSide - 1)).toBeLessThan(0.02);
			expect(Math.abs(poissonCusumArl(d.hDown, 0.5, mu) / d.targetStepsPerSide - 1)).toBeLessThan(0.02);
		}
	});

	it('at 100 counts per step the run length is near the budget, where the design for 20 per step lasted tens of budgets', () => {
		// The former cap designed every step above 20 counts at 20 (issue: 138–865 days against 60).
		const mu = 100;
		const d = designAt(mu, 1, inputs);
		const ratioUp = poissonCusumArl(d.hUp, 2, mu) / d.targetStepsPerSide;
		expect(ratioUp).toBeGreaterThan(0.6);
		expect(ratioUp).toBeLessThan(1.6);
		const at20 = designFor(35, 1, inputs); // μ = 2^(35/8) ≈ 20.7
		expect(poissonCusumArl(at20.hUp, 2, mu) / d.targetStepsPerSide).toBeGreaterThan(10);
	});
});

describe('window length changing mid-run', () => {
	const win = (seq: number, window_s: number, switches: number, t_ms: number): Frame => ({
		...frame(seq, 0.95),
		window_s,
		dwell_s: window_s,
		switches,
		t: t_ms
	});
	const noBurst = { switching_burst: { enabled: false }, rate_drift: {} };

	it('rate_drift counts the budget in windows of each step’s own length', () => {
		// One switch a second: 1-s windows, then 10-s windows (μ = 10, between bands 26 and 27).
		const engine = new DetectorEngine(noBurst, run6({ switching: flatSwitching(1) }));
		let t = frame(1, 0).t;
		for (let seq = 1; seq <= 3; seq++) engine.onFrame(win(seq, 1, 1, (t += 1000)));
		for (let seq = 4; seq <= 6; seq++) engine.onFrame(win(seq, 10, 10, (t += 10_000)));
		const designs = Object.values((engine.snapshot().detectors.rate_drift as any).designs) as any[];
		const targets = [...new Set(designs.map((d) => d.targetStepsPerSide))].sort((a, b) => a - b);
		expect(targets).toEqual([targetPerSide(10), targetPerSide(1)]);
		const tenSecond = designs.filter((d) => d.targetStepsPerSide === targetPerSide(10));
		expect(tenSecond.map((d) => d.band).sort()).toEqual([26, 27]);
	});

	it('switching_burst spends window_s / (D·86 400 s) per window whatever the window before was', () => {
		// budget.ts: α_window = window_s / (D·86 400 s); one test (the window's) on the first window.
		const engine = new DetectorEngine({ rate_drift: { enabled: false } }, run6({ switching: flatSwitching(1) }));
		let t = frame(1, 0).t;
		engine.onFrame(win(1, 1, 1, (t += 1000)));
		engine.onFrame(win(2, 1, 1, (t += 1000)));
		const events = engine.onFrame(win(3, 10, 80, t + 10_000)).filter((e) => e.kind === 'switching_burst');
		expect(events).toHaveLength(1);
		const ev = events[0].evidence as any;
		expect(ev.alphaWindow).toBeCloseTo(10 / (DAYS * 86_400), 15);
		expect(ev.testsThisWindow).toBe(2);
	});
});
