// Statistical behaviour of the rate and occupancy detectors on seeded streams drawn from the model:
// false alarms within the budget, detection delay against the Poisson CUSUM's run length
// (Lucas 1985; Brook & Evans 1972 Markov chain), and what the fridge temperature explains.
// The budgets are scaled up (one false alarm per 2000 windows) so that 100 000 windows test them.
import { describe, expect, it } from 'vitest';
import { DetectorEngine, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { poissonCusumArl } from '../../../src/lib/stats/cusum';
import { noiseFactor } from '../../../src/lib/physics/occupation';
import { countFrames, ringFrames, rng } from './sim';
import { budgetOf, flatSwitching, noBaseline, run6, warmSwitching } from './models';

const N = 100_000;
const BUDGET = 2000;
const W = (T: number) => 74.2 * Math.exp(-6 / noiseFactor(1, T));

const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const opens = (events: DetectorEvent[], kind: string) => events.filter((e) => e.type === 'open' && e.kind === kind);

/** P(K ≤ c | μ) by direct summation of the Poisson terms. */
function cdf(c: number, mu: number): number {
	let term = Math.exp(-mu);
	let sum = 0;
	for (let j = 0; j <= c; j++) {
		sum += term;
		term *= mu / (j + 1);
	}
	return sum;
}
/** Central Poisson interval holding `coverage` of the mass: the quantiles at (1 ∓ coverage)/2. */
function poissonRange(mu: number, coverage: number): [number, number] {
	const tail = (1 - coverage) / 2;
	let lo = 0;
	while (cdf(lo, mu) < tail) lo++;
	let hi = lo;
	while (cdf(hi, mu) < 1 - tail) hi++;
	return [lo, hi];
}

describe('in control, with a slow temperature ramp the model explains (seeded)', () => {
	// 20 → 30 mK over the run: the predicted rate rises from 0.50 to 1.38 switches per window.
	const T = (i: number) => 20 + (10 * i) / N;
	const frames = ringFrames({ seed: 2024, states: 6, windows: N, rate_per_s: (i) => W(T(i)), T_mK: T });
	const budget = budgetOf(BUDGET);
	const rules = {
		switching_burst: { falseAlarmEvery_days: budget },
		// against the exact model for the whole run: this checks the chart's design spends the budget
		rate_drift: { falseAlarmEvery_days: budget, ...noBaseline },
		occupancy_imbalance: { falseAlarmEvery_days: budget }
	};
	const events = feed(new DetectorEngine(rules, run6({ switching: warmSwitching })), frames);
	const expected = N / BUDGET; // 50 per kind
	const [lo, hi] = poissonRange(expected, 0.998);

	it('rate_drift spends its budget: the count lies inside the budget’s central 99.8 % Poisson interval', () => {
		// The chart is designed so its in-control run length equals the budget (per band of μ):
		// its false alarms are Poisson-like with mean ≈ 50 here, however the rate moves.
		const n = opens(events, 'rate_drift').length;
		expect(n).toBeGreaterThanOrEqual(lo);
		expect(n).toBeLessThanOrEqual(hi);
	});

	it('switching_burst and occupancy_imbalance stay within it (the Bonferroni bound is an upper bound)', () => {
		expect(opens(events, 'switching_burst').length).toBeLessThanOrEqual(hi);
		expect(opens(events, 'occupancy_imbalance').length).toBeLessThanOrEqual(hi);
		// and the stream is plain in control for the others
		expect(opens(events, 'lock_lost')).toEqual([]);
		expect(opens(events, 'aux_limit')).toEqual([]);
	});

	it('the ramp is real: against the nominal-temperature prediction the chart is open most of the late run', () => {
		/** Fraction of windows in [from, to) during which a rate_drift condition was open. */
		const openFraction = (evs: DetectorEvent[], from: number, to: number) => {
			let open: number | null = null;
			let covered = 0;
			for (const e of evs.filter((x) => x.kind === 'rate_drift' && x.type !== 'update')) {
				if (e.type === 'open') open = e.seq!;
				else if (open !== null) {
					covered += Math.max(0, Math.min(e.seq!, to) - Math.max(open, from));
					open = null;
				}
			}
			if (open !== null) covered += Math.max(0, to - Math.max(open, from));
			return covered / (to - from);
		};
		const nominal = feed(
			new DetectorEngine(
				{
					...rules,
					switching_burst: { enabled: false },
					rate_drift: { falseAlarmEvery_days: budget, prediction: 'nominal', ...noBaseline }
				},
				run6({ switching: warmSwitching })
			),
			frames.slice(0, 50_000)
		);
		// windows 30 000–50 000: 23–25 mK, the nominal prediction is 1.5–1.7× too low there
		expect(openFraction(nominal, 30_000, 50_000)).toBeGreaterThan(0.5);
		expect(openFraction(events, 30_000, 50_000)).toBeLessThan(0.1);
	});
});

describe('single-window test: the false-alarm count matches the exact tail (seeded)', () => {
	it('openings ≈ N·P(K ≥ k*) with k* the smallest count whose tail is below α = 1/2000', () => {
		const mu = 2;
		const frames = countFrames({ seed: 77, windows: N, mean: () => mu });
		const rules = {
			switching_burst: { falseAlarmEvery_days: budgetOf(BUDGET), horizonWindows: 0, clearWindows: 1 },
			rate_drift: { enabled: false },
			occupancy_imbalance: { enabled: false }
		};
		const n = opens(feed(new DetectorEngine(rules, run6({ switching: flatSwitching(mu) })), frames), 'switching_burst').length;
		let k = 0;
		while (1 - cdf(k - 1, mu) > 1 / BUDGET) k++;
		const pAlarm = 1 - cdf(k - 1, mu);
		expect(pAlarm).toBeLessThanOrEqual(1 / BUDGET);
		const [lo, hi] = poissonRange(N * pAlarm, 0.998);
		expect(n).toBeGreaterThanOrEqual(lo);
		expect(n).toBeLessThanOrEqual(hi);
	});
});

describe('detection delay of rate_drift at a doubled rate (seeded Monte Carlo)', () => {
	it('the mean run length is the Poisson CUSUM’s zero-start ARL at ratio 2, within Monte Carlo error', () => {
		// The rate is doubled from the first window, so the chart starts from 0 as the Markov-chain
		// run length assumes; μ = 1 per window, one window per step.
		const M = 500;
		const rules = {
			switching_burst: { enabled: false },
			occupancy_imbalance: { enabled: false },
			rate_drift: { falseAlarmEvery_days: budgetOf(BUDGET), ...noBaseline }
		};
		const run = run6({ switching: flatSwitching(1) });
		const delays: number[] = [];
		let hUp = 0;
		for (let r = 0; r < M; r++) {
			const engine = new DetectorEngine(rules, run);
			const u = rng(1000 + r);
			let seq = 0;
			for (;;) {
				seq++;
				const [f] = countFrames({ seed: Math.floor(u() * 2 ** 31), windows: 1, mean: () => 2, firstSeq: seq });
				const open = opens(engine.onFrame(f), 'rate_drift')[0];
				if (open) {
					expect((open.evidence as any).direction).toBe('up');
					hUp = (open.evidence as any).decisionInterval;
					delays.push(seq);
					break;
				}
			}
		}
		const mean = delays.reduce((a, b) => a + b, 0) / M;
		const sd = Math.sqrt(delays.reduce((a, b) => a + (b - mean) ** 2, 0) / (M - 1));
		const arl = poissonCusumArl(hUp, 2, 1, 2);
		expect(Math.abs(mean - arl)).toBeLessThan(3 * (sd / Math.sqrt(M)));
	});
});

describe('what the fridge temperature explains (seeded)', () => {
	/** Poisson counts at factor(i)·W(T_i) with T measured in every window. */
	function stream(seed: number, n: number, T: (i: number) => number, factor: (i: number) => number): Frame[] {
		return countFrames({ seed, windows: n, mean: (i) => factor(i) * W(T(i)), T_mK: T });
	}
	const wobble = (seed: number) => {
		const u = rng(seed);
		let x = 0;
		return (i: number) => {
			void i;
			x = 0.99 * x + 0.05 * (u() - 0.5);
			return 20 + x;
		};
	};

	it('a slow detuning drift at steady temperature is reported as unexplained by temperature', () => {
		for (let seed = 1; seed <= 5; seed++) {
			const T = wobble(seed);
			const temps = Array.from({ length: 6000 }, (_, i) => T(i));
			// the rate climbs from 1× to 2× between windows 2000 and 4000, then stays
			const factor = (i: number) => 1 + Math.min(1, Math.max(0, (i - 2000) / 2000));
			// the drift begins inside the first two hours: charted against the model, not a baseline
			const events = feed(
				new DetectorEngine({ rate_drift: noBaseline }, run6({ switching: warmSwitching })),
				stream(seed, 6000, (i) => temps[i], factor)
			);
			const drifts = opens(events, 'rate_drift');
			expect(drifts.length).toBeGreaterThan(0);
			expect(drifts[0].seq!).toBeGreaterThan(2000);
			for (const e of drifts) {
				const ev = e.evidence as any;
				expect(ev.temperatureMeasured).toBe(true);
				expect(ev.explainedByTemperature).toBe(false);
				expect(ev.explanation).toMatch(/^Unexplained by temperature/);
			}
		}
	});

	it('a temperature excursion alone opens neither rate_drift nor switching_burst; aux_limit reports it', () => {
		for (let seed = 11; seed <= 15; seed++) {
			// 20 mK, then 32 mK for 3000 windows (the rate rises about 3.6×), then back
			const T = (i: number) => (i >= 1000 && i < 4000 ? 32 : 20);
			const events = feed(
				new DetectorEngine({ rate_drift: noBaseline }, run6({ switching: warmSwitching })),
				stream(seed, 6000, T, () => 1)
			);
			expect(opens(events, 'rate_drift')).toEqual([]);
			expect(opens(events, 'switching_burst')).toEqual([]);
			expect(opens(events, 'aux_limit')).toMatchObject([{ key: 'mxc_mK', seq: 1003 }]);
			// Against the nominal prediction the same excursion opens the chart, explained by temperature.
			const nominal = feed(
				new DetectorEngine({ rate_drift: { prediction: 'nominal', ...noBaseline } }, run6({ switching: warmSwitching })),
				stream(seed, 6000, T, () => 1)
			);
			const drifts = opens(nominal, 'rate_drift');
			expect(drifts.length).toBeGreaterThan(0);
			expect(drifts[0].seq!).toBeGreaterThan(1000);
			expect(drifts[0].seq!).toBeLessThan(1100);
			expect((drifts[0].evidence as any).explainedByTemperature).toBe(true);
			expect((drifts[0].evidence as any).explanation).toMatch(/^Explained by temperature/);
		}
	});
});
