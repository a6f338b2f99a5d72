// occupancy_imbalance's false-alarm budget on a junction-type six-state device whose states
// switch ten times more often within their saddle-sharing pair than across (perfectly symmetric
// occupancy: every incident is false), and its delay on a 1.7× excess of one state at 25 mK.
// Run: npx tsx tests/bench/occupancy-budget.bench.ts   (BENCH_WINDOWS to change the span)
// Not part of the test suite: nothing is asserted; the table is for the closing note.
// The budget is an upper bound (Bonferroni over windows, budget.ts), so the count is compared
// with the one-sided exact Poisson tail P(X ≥ count | budget) (stats/poisson.ts).
import { chiSquareUpperTail, DetectorEngine, observedModes, occupancyStatisticFromModes, type DetectorEvent } from '../../src/lib/detect';
import { poissonUpperTail } from '../../src/lib/stats/poisson';
import { predictRate } from '../../src/lib/physics/activation';
import { pairFrames } from '../unit/detect/pair-sim';
import { run6, warmSwitching } from '../unit/detect/models';

const WINDOWS = Number(process.env.BENCH_WINDOWS ?? 300_000);
const DAYS = 30;
const budget = WINDOWS / (DAYS * 86_400);

function incidents(events: DetectorEvent[], key?: string): number {
	return events.filter((e) => e.kind === 'occupancy_imbalance' && e.type === 'open' && (key === undefined || e.key === key)).length;
}

function inControl(total_per_s: number, ratio: number, transitions: boolean, seed: number) {
	const engine = new DetectorEngine({ occupancy_imbalance: { falseAlarmEvery_days: DAYS } }, run6());
	const events: DetectorEvent[] = [];
	const chunk = 20_000;
	for (let start = 0; start < WINDOWS; start += chunk) {
		const fs = pairFrames({
			seed: seed + start,
			states: 6,
			windows: Math.min(chunk, WINDOWS - start),
			withinRate_per_s: (total_per_s * ratio) / (ratio + 1),
			crossRate_per_s: total_per_s / (ratio + 1),
			shots: 2000,
			transitions,
			firstSeq: start + 1
		});
		for (const f of fs) events.push(...engine.onFrame(f));
	}
	return { states: incidents(events, 'states'), pairs: incidents(events, 'pairs') };
}

const W25 = predictRate({ ...warmSwitching, source: 'manual' }, { T_mK: 25 }).rate_per_s;
const rows: string[] = [];
rows.push(
	`in control, ${WINDOWS} windows of 1 s (${(WINDOWS / 86_400).toFixed(2)} days), budget 1 per ${DAYS} days → ${budget.toFixed(3)} expected at most`
);
rows.push('out-rate/s | within:cross | transitions | incidents states | incidents pairs | P(X ≥ count | budget)');
for (const [rate, ratio, seed] of [
	[0.21, 10, 10],
	[W25, 10, 11],
	[3, 10, 12],
	[W25, 30, 13]
] as const) {
	for (const tr of [true, false]) {
		const r = inControl(rate, ratio, tr, seed);
		const total = r.states + r.pairs;
		rows.push(
			`${rate.toFixed(2)} | ${ratio}:1 | ${tr ? 'yes' : 'no'} | ${r.states} | ${r.pairs} | ${poissonUpperTail(total, budget).toExponential(2)}`
		);
	}
}

// Out of control: from window 600 state 0 fills 1.7× as much as each other state, at 25 mK.
rows.push('');
rows.push(
	`out of control: 1.7× occupancy of state 0 from t = 600 s, out-rate ${W25.toFixed(3)}/s at 25 mK (warm-switching model), 2000 shots per window`
);
rows.push('seed | transitions | delay to open (s)');
for (const tr of [true, false]) {
	const delays: number[] = [];
	for (let seed = 1; seed <= 10; seed++) {
		const fs = pairFrames({
			seed: 500 + seed,
			states: 6,
			windows: 600 + 3600,
			withinRate_per_s: (W25 * 10) / 11,
			crossRate_per_s: W25 / 11,
			excess: 1.7,
			excessFrom: 600,
			transitions: tr
		});
		const engine = new DetectorEngine({ occupancy_imbalance: { falseAlarmEvery_days: DAYS } }, run6());
		let delay = NaN;
		for (const f of fs) {
			const open = engine.onFrame(f).find((e) => e.kind === 'occupancy_imbalance' && e.type === 'open' && e.key === 'states');
			if (open) {
				delay = f.seq - 600;
				break;
			}
		}
		delays.push(delay);
		rows.push(`${seed} | ${tr ? 'yes' : 'no'} | ${Number.isNaN(delay) ? '> 3600' : delay}`);
	}
}
console.log(rows.join('\n'));

// Tail calibration: p-values of independent horizons (no overlap) against their nominal level.
// A χ² p-value is uniform under the null when the effective samples are right; an estimated
// sample size makes it approximate, and this shows how far into the tail it holds.
const STUDENTIZE = process.env.BENCH_RAW !== '1';
const MIN_EPISODES = Number(process.env.BENCH_MIN_EPISODES ?? 0);
const HORIZONS = Number(process.env.BENCH_HORIZONS ?? 4000);
const H = Number(process.env.BENCH_HORIZON ?? 300);
const cal: string[] = [
	'',
	`tail calibration: ${HORIZONS} independent horizons of ${H} windows, observed-transitions χ²${STUDENTIZE ? ', modes studentized' : ', raw'}, modes with < ${MIN_EPISODES} episodes untested`,
	'out-rate/s | within:cross | P(p < 0.1) | P(p < 0.01) | P(p < 0.001) | mean χ² (dof)'
];
for (const [rate, ratio] of [
	[W25, 10],
	[0.21, 10],
	[W25, 30]
] as const) {
	const ps: number[] = [];
	let sumStat = 0;
	let sumDof = 0;
	const chunk = 200;
	for (let c = 0; c < HORIZONS; c += chunk) {
		const fs = pairFrames({
			seed: 9000 + c,
			states: 6,
			windows: H * chunk,
			withinRate_per_s: (rate * ratio) / (ratio + 1),
			crossRate_per_s: rate / (ratio + 1),
			shots: 2000
		});
		for (let b = 0; b < chunk; b++) {
			const counts = new Array<number>(6).fill(0);
			const tr = new Array<number>(36).fill(0);
			for (let i = b * H; i < (b + 1) * H; i++) {
				fs[i].counts.forEach((x, j) => (counts[j] += x));
				fs[i].transitions!.forEach((x, j) => (tr[j] += x));
			}
			const stat = occupancyStatisticFromModes(counts, observedModes(6, tr), 0, false, STUDENTIZE, MIN_EPISODES);
			if (!stat || stat.dof === 0) continue;
			sumStat += stat.statistic;
			sumDof += stat.dof;
			ps.push(chiSquareUpperTail(stat.statistic, stat.dof));
		}
	}
	const frac = (a: number) => (ps.filter((p) => p < a).length / ps.length).toFixed(4);
	cal.push(
		`${rate.toFixed(2)} | ${ratio}:1 | ${frac(0.1)} | ${frac(0.01)} | ${frac(0.001)} | ${(sumStat / ps.length).toFixed(2)} (${(sumDof / ps.length).toFixed(2)})`
	);
}
console.log(cal.join('\n'));
