// rate_drift and switching_burst when the rate model is not exact (seeded streams drawn from
// Poisson counts at a true rate off the model). The false-alarm budget must hold for any true rate
// within the model's 2σ band; σ of ln W comes from W0_sigma, A_sigma and covariance as
// physics/activation.ts propagates it (var ln W = σ0² + x²σA² − 2x·cov, x = 1/(2n̄+1)).
// Counts are compared with the Poisson distribution of the budget: a count at or above the
// smallest k with P(K ≥ k | budget's mean) ≤ 0.001 (stats/poisson.ts) fails. Detection delays are
// compared with today's chart against an exact model, whose zero-start run length the Brook & Evans
// (1972) Markov chain gives (stats/cusum.ts; checked against Monte Carlo in statistical.test.ts).
// Budgets are scaled up (one false alarm per 2000 windows) so that 40 000 windows test them.
import { describe, expect, it } from 'vitest';

// The streams are long and the first windows of each rate band design a chart (a Markov chain
// each); on a shared machine that can take longer than vitest's default 5 s. No time is asserted.
const SLOW = { timeout: 60_000 };
import { DetectorEngine, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { poissonThresholdForTail } from '../../../src/lib/stats/poisson';
import { poissonCusumArl, poissonCusumDecisionInterval } from '../../../src/lib/stats/cusum';
import { noiseFactor } from '../../../src/lib/physics/occupation';
import { DEFAULT_RATE_MODEL_UNCERTAINTY } from '../../../src/lib/physics/rate-model-schema';
import { rateFrames, rng } from './sim';
import { budgetOf, run6 } from './models';

const N = 40_000;
const BUDGET = 2000;
const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const pages = (events: DetectorEvent[], kind: string) =>
	events.filter((e) => e.type === 'open' && e.kind === kind && e.severity !== 'info');
const findings = (events: DetectorEvent[]) => events.filter((e) => e.type === 'open' && e.kind === 'rate_drift' && e.severity === 'info');
/** Smallest count whose probability under Poisson(mean) is at most 0.001: a count this large fails. */
const tooMany = (mean: number) => poissonThresholdForTail(mean, 0.001);

const SIGMA = 0.1;
/** Flat switching at 1/s whose ln W0 is known to σ = 0.1 (A = 0, so σ(ln W) = 0.1 at any temperature). */
const stated = (process: 'switching' | 'escape', W0_per_s: number) => ({
	process,
	W0_per_s,
	A: 0,
	mode_GHz: 5,
	nominal_mK: 20,
	W0_sigma: SIGMA
});
const budgetRules = (extra: object = {}) => ({
	switching_burst: { falseAlarmEvery_days: budgetOf(BUDGET) },
	rate_drift: { falseAlarmEvery_days: budgetOf(BUDGET), baseline_h: 1, ...extra },
	occupancy_imbalance: { enabled: false }
});

describe('in control with the true rate off the model, inside its 2σ band (seeded)', () => {
	const expected = N / BUDGET; // 20 per rule
	for (const k of [-2, -1, 1, 2]) {
		it(`true rate e^(${k}σ) × the model: each rule stays within its budget`, SLOW, () => {
			const factor = Math.exp(k * SIGMA);
			const events = feed(
				new DetectorEngine(budgetRules(), run6({ switching: stated('switching', 1) })),
				rateFrames({ seed: 300 + k, windows: N, switchRate: () => factor })
			);
			const drift = pages(events, 'rate_drift');
			const burst = pages(events, 'switching_burst');
			expect(drift.length).toBeLessThan(tooMany(expected));
			expect(burst.length).toBeLessThan(tooMany(expected));
			// at most one finding per process and run: it stays open until the model changes
			expect(findings(events).length).toBeLessThanOrEqual(1);
		});
	}

	it('2σ high: charts against the point prediction overspend a longer budget many times; against the band they keep it', SLOW, () => {
		// The reason for the band. At a budget of one per 20 000 windows (2 expected here) a chart
		// and a burst test that compare with the prediction itself see e^{0.2} = 1.22 × as an excess.
		const long = 20_000;
		const rules = (baseline_h: number) => ({
			switching_burst: { falseAlarmEvery_days: budgetOf(long) },
			rate_drift: { falseAlarmEvery_days: budgetOf(long), baseline_h },
			occupancy_imbalance: { enabled: false }
		});
		const frames = rateFrames({ seed: 302, windows: N, switchRate: () => Math.exp(2 * SIGMA) });
		const exact = feed(new DetectorEngine(rules(0), run6({ switching: { ...stated('switching', 1), W0_sigma: 0 } })), frames);
		expect(pages(exact, 'rate_drift').length).toBeGreaterThanOrEqual(tooMany(N / long));
		expect(pages(exact, 'switching_burst').length).toBeGreaterThanOrEqual(tooMany(N / long));
		const banded = feed(new DetectorEngine(rules(1), run6({ switching: stated('switching', 1) })), frames);
		expect(pages(banded, 'rate_drift').length).toBeLessThan(tooMany(N / long));
		expect(pages(banded, 'switching_burst').length).toBeLessThan(tooMany(N / long));
	});

	it('a model without stated uncertainty gets the declared default band, recorded in the evidence', SLOW, () => {
		const bare = { process: 'switching' as const, W0_per_s: 1, A: 0, mode_GHz: 5, nominal_mK: 20 };
		const events = feed(
			new DetectorEngine(budgetRules(), run6({ switching: bare })),
			rateFrames({ seed: 310, windows: N, switchRate: () => Math.exp(2 * DEFAULT_RATE_MODEL_UNCERTAINTY.W0_sigma) })
		);
		expect(pages(events, 'rate_drift').length).toBeLessThan(tooMany(expected));
		expect(pages(events, 'switching_burst').length).toBeLessThan(tooMany(expected));
		const anyDrift = events.find((e) => e.kind === 'rate_drift' && e.type === 'open');
		if (anyDrift)
			expect((anyDrift.evidence as any).reference?.uncertainty ?? (anyDrift.evidence as any).uncertainty).toMatchObject({
				W0_sigma: 0.1,
				stated: false
			});
		const anyBurst = events.find((e) => e.kind === 'switching_burst' && e.type === 'open');
		if (anyBurst) expect((anyBurst.evidence as any).uncertainty).toMatchObject({ W0_sigma: 0.1, A_sigma: 0, stated: false });
	});
});

describe('one budget per rule (seeded)', () => {
	it('watching switching and escape, each 2σ off its model, rate_drift opens within one budget in all', SLOW, () => {
		const rules = budgetRules({ processes: ['switching', 'escape'] });
		const run = run6({ switching: stated('switching', 1.25), escape: { ...stated('escape', 5) } });
		const frames = rateFrames({
			seed: 404,
			windows: N,
			dwell_s: 0.8,
			vacuum_s: 0.2,
			switchRate: () => 1.25 * Math.exp(2 * SIGMA),
			escapeRate: () => 5 * Math.exp(-2 * SIGMA)
		});
		const engine = new DetectorEngine(rules, run);
		const events = feed(engine, frames);
		expect(pages(events, 'rate_drift').length).toBeLessThan(tooMany(N / BUDGET));
		// Bonferroni: each process's chart is designed for twice the rule's run length (and each side twice that).
		const designs = Object.values((engine.snapshot().detectors.rate_drift as any).designs) as any[];
		expect(designs.length).toBeGreaterThan(0);
		for (const d of designs) expect(d.targetStepsPerSide * d.windowsPerStep).toBeCloseTo(2 * 2 * BUDGET, 6);
	});
});

describe('a fridge day 10 → 40 → 10 mK with a model off by 1σ in W0 and in A (seeded)', () => {
	// 1 GHz mode: hf/k_B = 48 mK, so the noise factor goes from 1.02 (10 mK) to 1.86 (40 mK) and
	// the rate from 0.20 to 2.9 per second. The temperature follows aux.mxc_mK (detect/expected.ts).
	const model = { process: 'switching' as const, W0_per_s: 74.2, A: 6, mode_GHz: 1, nominal_mK: 10, W0_sigma: 0.1, A_sigma: 0.3 };
	const T = (i: number) => 25 - 15 * Math.cos((2 * Math.PI * i) / N);
	// True ln W0 one σ high and A one σ low: the rate is further above the model the colder the fridge.
	const trueRate = (i: number) => Math.exp(Math.log(74.2) + 0.1 - (6 - 0.3) / noiseFactor(1, T(i)));

	it('no rule spends more than its budget', SLOW, () => {
		const events = feed(
			new DetectorEngine(budgetRules(), run6({ switching: model })),
			rateFrames({ seed: 510, windows: N, switchRate: trueRate, T_mK: T })
		);
		expect(pages(events, 'rate_drift').length).toBeLessThan(tooMany(N / BUDGET));
		expect(pages(events, 'switching_burst').length).toBeLessThan(tooMany(N / BUDGET));
		expect(findings(events).length).toBeLessThanOrEqual(1);
	});
});

describe('an operating point outside its model’s band (seeded)', () => {
	it('is one info finding, not a page; a later doubling still pages', () => {
		// 1.6 × the model, beyond its default band of e^{±0.2}; 30-day budget; baseline over 1 h.
		const bare = { process: 'switching' as const, W0_per_s: 1, A: 0, mode_GHz: 5, nominal_mK: 20 };
		const engine = new DetectorEngine(
			{ rate_drift: { baseline_h: 1 }, occupancy_imbalance: { enabled: false } },
			run6({ switching: bare })
		);
		const calm = feed(engine, rateFrames({ seed: 601, windows: 10_000, switchRate: () => 1.6 }));
		expect(pages(calm, 'rate_drift')).toEqual([]);
		const f = findings(calm);
		expect(f).toHaveLength(1);
		expect(f[0]).toMatchObject({ key: 'switching:model', severity: 'info' });
		expect((f[0] as { summary: string }).summary).toMatch(/does not match its switching rate model/);
		const doubled = feed(engine, rateFrames({ seed: 602, windows: 2_000, firstSeq: 10_001, switchRate: () => 3.2 }));
		const page = pages(doubled, 'rate_drift');
		expect(page).toHaveLength(1);
		expect(page[0]).toMatchObject({ key: 'switching', severity: 'warning' });
		expect((page[0].evidence as any).reference.basis).toBe('baseline');
	});
});

describe('a rate doubling after the baseline is still caught quickly (seeded Monte Carlo)', () => {
	// Today: the exact-model chart's zero-start run length at ratio 2 with h for a 30-day budget
	// (issue 8 measured 138 s at 0.21/s, 39 s at 0.85/s, 12 s at 3/s on the unchanged code).
	for (const mu of [0.21, 0.85, 3]) {
		it(`at ${mu} switches/s the mean delay is within 1.5 × today’s`, SLOW, () => {
			const budgetSteps = 30 * 86_400;
			// Today's design: one window per step when μ ≥ 0.5, else pooled to reach 0.5.
			const perStep = Math.max(1, Math.ceil(0.5 / mu - 1e-12));
			const muStep = 2 ** (Math.round(4 * Math.log2(mu * perStep)) / 4);
			const hToday = poissonCusumDecisionInterval((2 * budgetSteps) / perStep, 2, muStep);
			const today_s = poissonCusumArl(hToday, 2, muStep, 2) * perStep;

			const bare = { process: 'switching' as const, W0_per_s: mu, A: 0, mode_GHz: 5, nominal_mK: 20 };
			const rules = { switching_burst: { enabled: false }, occupancy_imbalance: { enabled: false }, rate_drift: { baseline_h: 2 } };
			const u = rng(700 + Math.round(mu * 100));
			const delays: number[] = [];
			const BASELINES = 4;
			const REPS = 15;
			for (let b = 0; b < BASELINES; b++) {
				const engine = new DetectorEngine(rules, run6({ switching: bare }));
				feed(engine, rateFrames({ seed: Math.floor(u() * 2 ** 31), windows: 7200, switchRate: () => mu }));
				const snap = JSON.stringify(engine.snapshot());
				for (let r = 0; r < REPS; r++) {
					const e = DetectorEngine.restore(JSON.parse(snap));
					const fs = rateFrames({ seed: Math.floor(u() * 2 ** 31), windows: 20 * today_s, firstSeq: 7201, switchRate: () => 2 * mu });
					const at = fs.findIndex((f) => pages(e.onFrame(f), 'rate_drift').length > 0);
					expect(at).toBeGreaterThanOrEqual(0);
					delays.push(at + 1);
				}
			}
			const mean = delays.reduce((a, b) => a + b, 0) / delays.length;
			expect(mean).toBeLessThan(1.5 * today_s);
		});
	}
});

describe('snapshots from before the baseline', () => {
	it('restore and go on: the baseline starts learning, old horizons are rebuilt', () => {
		const engine = new DetectorEngine(budgetRules(), run6({ switching: stated('switching', 1) }));
		feed(engine, rateFrames({ seed: 801, windows: 50, switchRate: () => 1 }));
		const snap = engine.snapshot() as any;
		delete snap.detectors.rate_drift.switching.baseline;
		snap.detectors.rate_drift.switching.horizon = null;
		snap.detectors.switching_burst.switching.horizon = {
			size: 60,
			width: 5,
			summed: 3,
			head: 0,
			len: 0,
			rows: new Array(300).fill(0),
			sums: [0, 0, 0]
		};
		const restored = DetectorEngine.restore(JSON.parse(JSON.stringify(snap)));
		feed(restored, rateFrames({ seed: 802, windows: 50, firstSeq: 51, switchRate: () => 1 }));
		const after = restored.snapshot() as any;
		expect(after.detectors.rate_drift.switching.baseline).toMatchObject({ phase: 'learning', learned_s: 50 });
		expect(after.detectors.switching_burst.switching.horizon.width).toBe(6);
	});
});
