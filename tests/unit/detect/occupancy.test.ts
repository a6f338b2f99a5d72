// occupancy_imbalance: the effective-sample chi-square for equal occupancy (the goodness-of-fit
// test of NIST/SEMATECH e-Handbook 1.3.5.15, with the sample size corrected for correlated shots)
// and the binomial test on unexpected switching pairs. Checks: the graph spectra against their closed forms, the tails
// against NIST/SEMATECH tables and direct sums, the statistic's calibration on simulated
// Markov switching (its mean must be its degrees of freedom), and hand-built windows.
import { describe, expect, it } from 'vitest';
import {
	binomialUpperTail,
	chiSquareUpperTail,
	DetectorEngine,
	occupancyModes,
	occupancyStatistic,
	type DetectorEvent
} from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { ringFrames } from './sim';
import { run6 } from './models';
import { frame } from './frames';

const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const occ = (events: DetectorEvent[], key?: string) =>
	events.filter((e) => e.kind === 'occupancy_imbalance' && (key === undefined || e.key === key));

describe('graph spectra of the expected pairs', () => {
	it('ring: n_m per switch is sin²(πm/K) (Laplacian eigenvalues 2 − 2cos(2πm/K), mean degree 2)', () => {
		for (const K of [3, 4, 6, 8, 12]) {
			const got = [...occupancyModes(K, 'neighbours').perSwitch].sort((a, b) => a - b);
			const want = Array.from({ length: K - 1 }, (_, i) => Math.sin((Math.PI * (i + 1)) / K) ** 2).sort((a, b) => a - b);
			got.forEach((g, i) => expect(g).toBeCloseTo(want[i], 10));
		}
	});

	it('all pairs: every mode K/(2(K−1)); two states: 1 (the telegraph signal relaxes at twice the switching rate)', () => {
		for (const K of [3, 5, 6]) for (const g of occupancyModes(K, 'all').perSwitch) expect(g).toBeCloseTo(K / (2 * (K - 1)), 10);
		expect(occupancyModes(2, 'neighbours').perSwitch).toHaveLength(1);
		expect(occupancyModes(2, 'neighbours').perSwitch[0]).toBeCloseTo(1, 12);
	});

	it('modes are orthonormal and orthogonal to the constant vector, also for a disconnected list', () => {
		const modes = occupancyModes(6, [
			[0, 1],
			[2, 3]
		]);
		expect(modes.vectors).toHaveLength(5);
		for (const v of modes.vectors) {
			expect(v.reduce((a, b) => a + b, 0)).toBeCloseTo(0, 10);
			expect(v.reduce((a, b) => a + b * b, 0)).toBeCloseTo(1, 10);
		}
		// two edges: two modes with eigenvalue 2, the rest 0 (mean degree 4/6)
		const sorted = [...modes.perSwitch].sort((a, b) => a - b);
		[0, 0, 0, 2 / (2 * (4 / 6)), 2 / (2 * (4 / 6))].forEach((x, i) => expect(sorted[i]).toBeCloseTo(x, 10));
	});
});

describe('tails', () => {
	it('chi-square upper tail at the NIST/SEMATECH 1.3.6.7.4 critical values', () => {
		// upper-tail critical values (dof, α, value), from the handbook's table (from memory)
		for (const [dof, alpha, x] of [
			[1, 0.05, 3.841],
			[5, 0.05, 11.07],
			[5, 0.01, 15.086],
			[5, 0.001, 20.515],
			[10, 0.01, 23.209]
		]) {
			expect(chiSquareUpperTail(x, dof) / alpha).toBeCloseTo(1, 2);
		}
	});

	it('binomial upper tail against a direct sum of the probability mass', () => {
		const direct = (x: number, n: number, p: number) => {
			let s = 0;
			for (let j = x; j <= n; j++) s += Math.exp(lnChoose(n, j) + j * Math.log(p) + (n - j) * Math.log(1 - p));
			return s;
		};
		for (const [x, n, p] of [
			[5, 20, 0.1],
			[12, 40, 0.25],
			[30, 60, 0.2],
			[1, 1, 0.3]
		]) {
			expect(binomialUpperTail(x, n, p) / direct(x, n, p)).toBeCloseTo(1, 6);
		}
		expect(binomialUpperTail(0, 10, 0.2)).toBe(1);
		expect(binomialUpperTail(1, 10, 0)).toBe(0);
	});
});

function lnChoose(n: number, k: number): number {
	let s = 0;
	for (let i = 1; i <= k; i++) s += Math.log(n - k + i) - Math.log(i);
	return s;
}

describe('calibration on simulated switching (seeded)', () => {
	/** Mean and variance of the statistic over independent horizons of one long stream. */
	function moments(K: number, pairs: 'neighbours' | 'all', rate: number, longJumps: number, seed: number) {
		const H = 300;
		const M = 300;
		const fs = ringFrames({ seed, states: K, windows: H * M, rate_per_s: () => rate, longJumps, transitions: false });
		const modes = occupancyModes(K, pairs);
		const xs: number[] = [];
		let raw = 0;
		for (let b = 0; b < M; b++) {
			const counts = new Array<number>(K).fill(0);
			let sw = 0;
			for (let i = b * H; i < (b + 1) * H; i++) {
				fs[i].counts.forEach((c, j) => (counts[j] += c));
				sw += fs[i].switches;
			}
			xs.push(occupancyStatistic(counts, sw, 0, modes)!.statistic);
			// the textbook statistic on raw shot counts, for contrast
			const n = counts.reduce((a, c) => a + c, 0);
			raw += counts.reduce((a, c) => a + (c - n / K) ** 2 / (n / K), 0) / M;
		}
		const mean = xs.reduce((a, b) => a + b, 0) / M;
		const variance = xs.reduce((a, b) => a + (b - mean) ** 2, 0) / (M - 1);
		return { mean, variance, raw, se: Math.sqrt((2 * (K - 1)) / M) };
	}

	it('ring of six, neighbour switching: the mean is the dof, 5, within 3 standard errors; raw shots are far off', () => {
		const m = moments(6, 'neighbours', 1, 0, 21);
		expect(Math.abs(m.mean - 5)).toBeLessThan(3 * m.se);
		// χ² variance is 2·dof = 10; the sample variance of 300 values has a relative error ≈ √(2/300)·√(1+…)
		expect(m.variance).toBeGreaterThan(7);
		expect(m.variance).toBeLessThan(14);
		expect(m.raw).toBeGreaterThan(50);
	});

	it('two states, and six states with switching to any other state (model all)', () => {
		const two = moments(2, 'neighbours', 1, 0, 22);
		expect(Math.abs(two.mean - 1)).toBeLessThan(3 * two.se);
		// uniform over the other five: a neighbour with probability 2/5, else one of the three others
		const all = moments(6, 'all', 1, 3 / 5, 23);
		expect(Math.abs(all.mean - 5)).toBeLessThan(3 * all.se);
	});
});

describe('occupancy_imbalance on windows', () => {
	const rules = { occupancy_imbalance: { horizonWindows: 100, minSwitches: 50, clearWindows: 10 } };

	it('a sticky state opens key states, naming it as the most over-filled', () => {
		// state 2 leaves four times more slowly than the others: it holds about 4/9 of the time
		const fs = ringFrames({ seed: 5, states: 6, windows: 400, rate_per_s: () => 3, stickiness: [1, 1, 0.25, 1, 1, 1] });
		const events = occ(feed(new DetectorEngine(rules, run6()), fs), 'states');
		expect(events[0]).toMatchObject({ type: 'open', key: 'states', severity: 'warning' });
		const ev = events[0].evidence as any;
		expect(ev.mostOver.state).toBe(2);
		expect(ev.mostOver.fraction).toBeGreaterThan(0.3);
		expect(ev.expectedFraction).toBeCloseTo(1 / 6, 12);
		expect(ev.pValue).toBeLessThan(ev.alpha);
		expect(ev.pValue).toBeCloseTo(chiSquareUpperTail(ev.statistic, ev.dof), 12);
		expect(ev).toMatchObject({ rule: 'occupancy_imbalance', version: 1, dof: 5, symmetric: true, correction: 'bonferroni' });
		// the horizon is the last (at most) 100 windows up to the opening one; with each mode read
		// as Student t on its own episodes the opening may now come after the horizon has filled
		const seq = events[0].seq!;
		expect(ev.horizon).toMatchObject({ fromSeq: Math.max(1, seq - 99), toSeq: seq, windows: Math.min(seq, 100) });
		if (events[0].type === 'open') expect(events[0].summary).toMatch(/state 2 holds/);
	});

	it('the same run at a detuned operating point, or with symmetric false, is not tested', () => {
		const fs = ringFrames({ seed: 5, states: 6, windows: 400, rate_per_s: () => 3, stickiness: [1, 1, 0.25, 1, 1, 1] });
		expect(occ(feed(new DetectorEngine(rules, run6(undefined, { operatingPoint: { detuning: 0.4 } })), fs), 'states')).toEqual([]);
		expect(
			occ(feed(new DetectorEngine({ occupancy_imbalance: { ...rules.occupancy_imbalance, symmetric: false } }, run6()), fs), 'states')
		).toEqual([]);
		// explicit true overrides the detuning
		const forced = { occupancy_imbalance: { ...rules.occupancy_imbalance, symmetric: true } };
		expect(occ(feed(new DetectorEngine(forced, run6(undefined, { operatingPoint: { detuning: 0.4 } })), fs), 'states')).not.toEqual([]);
	});

	it('slow switching with every shot in one state is not an imbalance (too few episodes to test)', () => {
		const fs = Array.from({ length: 400 }, (_, i) => ({ ...frame(i + 1, 0.95), counts: [100, 0, 0, 0, 0, 0], switches: 0 }));
		expect(occ(feed(new DetectorEngine(rules, run6()), fs))).toEqual([]);
	});

	it('clears when the occupancy is even again', () => {
		// A sticky state's own switches are few, and the effective samples now follow the observed
		// transitions, so at stickiness 0.25 a 100-window horizon legitimately drifts to p ≈ 0.08 in
		// this stream; 0.15 keeps the excess plain for the whole sticky phase.
		const sticky = ringFrames({ seed: 6, states: 6, windows: 300, rate_per_s: () => 3, stickiness: [0.15, 1, 1, 1, 1, 1] });
		const even = ringFrames({ seed: 7, states: 6, windows: 400, rate_per_s: () => 3, firstSeq: 301 });
		const events = occ(feed(new DetectorEngine(rules, run6()), [...sticky, ...even]), 'states').filter((e) => e.type !== 'update');
		expect(events.map((e) => e.type)).toEqual(['open', 'clear']);
		expect(events[1].seq!).toBeGreaterThan(300);
	});

	it('switching on pairs the setup does not expect opens key pairs, with the pairs named', () => {
		const fs = ringFrames({ seed: 8, states: 6, windows: 300, rate_per_s: () => 2, longJumps: 0.5 });
		const events = occ(feed(new DetectorEngine(rules, run6()), fs), 'pairs');
		expect(events[0]).toMatchObject({ type: 'open', key: 'pairs' });
		const ev = events[0].evidence as any;
		expect(ev.fraction).toBeGreaterThan(0.25);
		expect(ev.pValue / binomialUpperTail(ev.unexpected, ev.switches, 0.25)).toBeCloseTo(1, 12);
		expect(ev.pValue).toBeLessThan(ev.alpha);
		for (const p of ev.topPairs) expect([1, 5]).not.toContain((p.to - p.from + 6) % 6);
		// with every pair expected, nothing is unexpected
		const all = { occupancy_imbalance: { ...rules.occupancy_imbalance, expectedPairs: 'all' } };
		expect(occ(feed(new DetectorEngine(all, run6()), fs), 'pairs')).toEqual([]);
	});

	it('no transitions sent: no pair test; counts of the wrong length are ignored', () => {
		const fs = ringFrames({ seed: 8, states: 6, windows: 300, rate_per_s: () => 2, longJumps: 0.5, transitions: false });
		expect(occ(feed(new DetectorEngine(rules, run6()), fs), 'pairs')).toEqual([]);
		const short = Array.from({ length: 50 }, (_, i) => ({ ...frame(i + 1, 0.9), counts: [5, 0, 0], switches: 40 }));
		const engine = new DetectorEngine(rules, run6());
		expect(occ(feed(engine, short))).toEqual([]);
		expect((engine.snapshot().detectors.occupancy_imbalance as any).horizon).toBeNull();
	});

	it('a pair list naming a state the run does not have is refused with the field named', () => {
		expect(
			() =>
				new DetectorEngine(
					{
						occupancy_imbalance: {
							expectedPairs: [
								[0, 1],
								[2, 7]
							]
						}
					},
					run6()
				)
		).toThrow(/occupancy_imbalance\.expectedPairs\.1\.1: state 7 does not exist in a 6-state run/);
	});
});
