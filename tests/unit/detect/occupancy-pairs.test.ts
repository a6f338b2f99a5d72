// occupancy_imbalance on the switching graph that is really there: a junction-type device with
// six phase states switching ten times more often within their saddle-sharing pairs than across.
// Sources named beside each check: Kemeny & Snell, Finite Markov Chains (1960), Thm 4.6.1 (the
// fundamental matrix and the limiting covariance of occupation fractions); the chi-square law's
// mean (= its degrees of freedom); the exact Poisson tail (Garwood; stats/poisson.ts) for
// incident counts against the budget. Streams are seeded (tests/unit/detect/pair-sim.ts).
import { describe, expect, it } from 'vitest';
import {
	DetectorEngine,
	observedModes,
	occupancyModes,
	occupancyStatistic,
	occupancyStatisticFromModes,
	batchMeansOccupancy,
	type DetectorEvent
} from '../../../src/lib/detect';
import { solveLinearSystem } from '../../../src/lib/stats/linear-system';
import { poissonUpperTail } from '../../../src/lib/stats/poisson';
import { predictRate } from '../../../src/lib/physics/activation';
import { pairFrames } from './pair-sim';
import { run6, warmSwitching } from './models';

const K = 6;
/** Directed transition counts of the pair graph: within-pair a each way, across b each way. */
function pairCounts(a: number, b: number): number[] {
	const n = new Array<number>(K * K).fill(0);
	for (let s = 0; s < K; s += 2) {
		n[s * K + s + 1] = n[(s + 1) * K + s] = a;
		const next = (s + 2) % K;
		n[(s + 1) * K + next] = n[next * K + s + 1] = b;
	}
	return n;
}

describe('effective samples from observed transitions', () => {
	it('match the fundamental-matrix covariance T·Cov(f_i, f_j) = π_i Z_ij + π_j Z_ji, Z = (A − Q)⁻¹ − A (Kemeny & Snell Thm 4.6.1, continuous time)', () => {
		const T = 3600;
		for (const counts of [pairCounts(300, 30), pairCounts(50, 50), pairCounts(1000, 7)]) {
			// rates estimated under equal occupancy: q_ij = K(n_ij + n_ji)/(2T)
			const Q = new Float64Array(K * K);
			for (let i = 0; i < K; i++)
				for (let j = 0; j < K; j++) if (i !== j) Q[i * K + j] = (K * (counts[i * K + j] + counts[j * K + i])) / (2 * T);
			for (let i = 0; i < K; i++) for (let j = 0; j < K; j++) if (i !== j) Q[i * K + i] -= Q[i * K + j];
			const AminusQ = new Float64Array(K * K).map((_, k) => 1 / K - Q[k]);
			const Z: number[][] = Array.from({ length: K }, () => new Array<number>(K).fill(0));
			for (let j = 0; j < K; j++) {
				const e = new Float64Array(K);
				e[j] = 1;
				const col = solveLinearSystem(AminusQ, e, K)!;
				for (let i = 0; i < K; i++) Z[i][j] = col[i] - 1 / K;
			}
			const modes = observedModes(K, counts);
			for (let i = 0; i < K; i++) {
				for (let j = 0; j < K; j++) {
					const textbook = ((1 / K) * Z[i][j] + (1 / K) * Z[j][i]) / T;
					let spectral = 0;
					modes.vectors.forEach((v, m) => (spectral += (v[i] * v[j]) / (K * modes.samples[m])));
					expect(spectral).toBeCloseTo(textbook, 10);
				}
			}
		}
	});

	it('two states with N switches give N samples; equal counts on a ring give the unit-graph modes (sin²(πm/K) per switch)', () => {
		expect(observedModes(2, [0, 40, 41, 0]).samples[0]).toBeCloseTo(81, 10);
		const ring = new Array<number>(K * K).fill(0);
		for (let i = 0; i < K; i++) ring[i * K + ((i + 1) % K)] = ring[((i + 1) % K) * K + i] = 10;
		const N = 20 * K;
		const got = [...observedModes(K, ring).samples].sort((a, b) => a - b);
		const want = occupancyModes(K, 'neighbours')
			.perSwitch.map((g) => g * N)
			.sort((a, b) => a - b);
		got.forEach((g, i) => expect(g).toBeCloseTo(want[i], 8));
	});

	it('refuses a transition matrix of the wrong size, naming the size', () => {
		expect(() => observedModes(K, [1, 2, 3])).toThrow(/36 entries/);
	});
});

describe('calibration on 10:1 pair switching (seeded)', () => {
	it('the statistic averages its 5 degrees of freedom (χ² mean), where the unit-graph sample size gave ≈ 12.8', () => {
		const H = 300;
		const M = 200;
		const fs = pairFrames({ seed: 31, states: K, windows: H * M, withinRate_per_s: 10 / 11, crossRate_per_s: 1 / 11, shots: 200 });
		const now: number[] = [];
		const unitGraph: number[] = [];
		for (let b = 0; b < M; b++) {
			const counts = new Array<number>(K).fill(0);
			const tr = new Array<number>(K * K).fill(0);
			let sw = 0;
			for (let i = b * H; i < (b + 1) * H; i++) {
				fs[i].counts.forEach((c, j) => (counts[j] += c));
				fs[i].transitions!.forEach((c, j) => (tr[j] += c));
				sw += fs[i].switches;
			}
			now.push(occupancyStatisticFromModes(counts, observedModes(K, tr), 0)!.statistic);
			unitGraph.push(occupancyStatistic(counts, sw, 0, occupancyModes(K, 'neighbours'))!.statistic);
		}
		const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
		const se = Math.sqrt((2 * 5) / M);
		expect(Math.abs(mean(now) - 5)).toBeLessThan(3 * se);
		expect(mean(unitGraph)).toBeGreaterThan(5 + 10 * se);
	}, 60_000);
});

const opens = (events: DetectorEvent[], key?: string) =>
	events.filter((e) => e.kind === 'occupancy_imbalance' && e.type === 'open' && (key === undefined || e.key === key)).length;

describe('false-alarm budget on a 10:1 paired six-state device (seeded)', () => {
	// 30 000 one-second windows with a budget scaled so that it allows 0.116 false incidents,
	// the same as 30 days allows over 300 000 windows (the benchmark runs that span).
	const WINDOWS = 30_000;
	const budget_days = WINDOWS / 0.1157 / 86_400;
	const allowed = WINDOWS / (budget_days * 86_400);
	const W25 = predictRate({ ...warmSwitching, source: 'manual' }, { T_mK: 25 }).rate_per_s;

	for (const transitions of [true, false]) {
		it(`incidents stay within the exact Poisson tail of the budget (${transitions ? 'observed transitions' : 'batch means, no transitions'})`, () => {
			const fs = pairFrames({
				seed: transitions ? 41 : 42,
				states: K,
				windows: WINDOWS,
				withinRate_per_s: (W25 * 10) / 11,
				crossRate_per_s: W25 / 11,
				shots: 2000,
				transitions
			});
			const engine = new DetectorEngine({ occupancy_imbalance: { falseAlarmEvery_days: budget_days } }, run6());
			const events = fs.flatMap((f) => engine.onFrame(f));
			const count = opens(events);
			// one-sided: the budget is an upper bound (Bonferroni, budget.ts); reject at 1 %
			expect(poissonUpperTail(count, allowed)).toBeGreaterThan(0.01);
			// the pair pattern is expected: switching stays on ring-neighbour pairs
			expect(opens(events, 'pairs')).toBe(0);
		}, 60_000);
	}
});

describe('out of control at 25 mK (seeded)', () => {
	it('a 1.7× occupancy of one state is caught within an hour with the default rules (2000 shots a window)', () => {
		const W25 = predictRate({ ...warmSwitching, source: 'manual' }, { T_mK: 25 }).rate_per_s;
		// the warm-switching model: about 0.85 switches/s at 25 mK
		expect(W25).toBeGreaterThan(0.8);
		expect(W25).toBeLessThan(0.9);
		for (const seed of [1, 2, 3]) {
			const onset = 600;
			const fs = pairFrames({
				seed: 500 + seed,
				states: K,
				windows: onset + 3600,
				withinRate_per_s: (W25 * 10) / 11,
				crossRate_per_s: W25 / 11,
				excess: 1.7,
				excessFrom: onset
			});
			const engine = new DetectorEngine({}, run6());
			let opened: DetectorEvent | undefined;
			for (const f of fs) {
				opened = engine.onFrame(f).find((e) => e.kind === 'occupancy_imbalance' && e.type === 'open' && e.key === 'states');
				if (opened) break;
			}
			expect(opened, `seed ${seed}`).toBeDefined();
			expect(opened!.seq! - onset).toBeGreaterThan(0);
			expect(opened!.seq! - onset).toBeLessThanOrEqual(3600);
			const ev = opened!.evidence as any;
			expect(ev.mostOver.state).toBe(0);
			expect(ev.method).toMatch(/observed transitions/);
		}
	}, 60_000);
});

describe('unexpected pairs on a paired device (seeded)', () => {
	it('jumps to the opposite state, a pair the ring does not expect, open key pairs; occupancy stays even and quiet', () => {
		// 10:1 pairs at 1 switch/s plus 1/s to the opposite state: half of all switches
		// are unexpected, above the tolerated 25 %; rates stay symmetric, so occupancy is uniform.
		const fs = pairFrames({
			seed: 61,
			states: K,
			windows: 3000,
			withinRate_per_s: 10 / 11,
			crossRate_per_s: 1 / 11,
			oppositeRate_per_s: 1,
			shots: 200
		});
		const engine = new DetectorEngine({ occupancy_imbalance: { horizonWindows: 600 } }, run6());
		const events = fs.flatMap((f) => engine.onFrame(f));
		expect(opens(events, 'pairs')).toBe(1);
		expect(opens(events, 'states')).toBe(0);
		const open = events.find((e) => e.kind === 'occupancy_imbalance' && e.type === 'open')!;
		for (const p of (open.evidence as any).topPairs) expect((p.to - p.from + K) % K).toBe(3);
	}, 60_000);
});

describe('batch means without transitions', () => {
	it('Student t per mode: identical batches carry no information; a constant offset with batch noise is significant', () => {
		const vectors = occupancyModes(K, 'neighbours').vectors;
		const flat = Array.from({ length: 10 }, () => [10, 10, 10, 10, 10, 10]);
		expect(batchMeansOccupancy(flat, vectors)!.pValue).toBe(1);
		const tilted = Array.from({ length: 10 }, (_, b) => [20 + (b % 3), 10, 10, 10, 10, 10 - (b % 3)]);
		const r = batchMeansOccupancy(tilted, vectors)!;
		expect(r.pValue).toBeLessThan(1e-6);
		expect(r.dof).toBe(9);
		expect(() =>
			batchMeansOccupancy(
				[
					[1, 2],
					[1, 2, 3]
				],
				vectors
			)
		).toThrow(/every batch needs 2 counts/);
	});
});
