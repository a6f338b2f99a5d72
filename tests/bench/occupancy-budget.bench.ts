// occupancy_imbalance's false-alarm budget on a junction-type six-state device whose states
// switch ten times more often within their saddle-sharing pair than across (perfectly symmetric
// occupancy: every incident is false), and its delay on a 1.7× excess of one state at 25 mK.
// Run: npx tsx tests/bench/occupancy-budget.bench.ts   (BENCH_WINDOWS to change the span)
// Not part of the test suite: nothing is asserted; the table is for the closing note.
// The budget is an upper bound (Bonferroni over windows, budget.ts), so the count is compared
// with the one-sided exact Poisson tail P(X ≥ count | budget) (stats/poisson.ts).
import { DetectorEngine, type DetectorEvent } from '../../src/lib/detect';
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
rows.push(`in control, ${WINDOWS} windows of 1 s (${(WINDOWS / 86_400).toFixed(2)} days), budget 1 per ${DAYS} days → ${budget.toFixed(3)} expected at most`);
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
		rows.push(`${rate.toFixed(2)} | ${ratio}:1 | ${tr ? 'yes' : 'no'} | ${r.states} | ${r.pairs} | ${poissonUpperTail(total, budget).toExponential(2)}`);
	}
}

// Out of control: from window 600 state 0 fills 1.7× as much as each other state, at 25 mK.
rows.push('');
rows.push(`out of control: 1.7× occupancy of state 0 from t = 600 s, out-rate ${W25.toFixed(3)}/s at 25 mK (warm-switching model), 2000 shots per window`);
rows.push('seed | transitions | delay to open (s)');
for (const tr of [true, false]) {
	const delays: number[] = [];
	for (let seed = 1; seed <= 10; seed++) {
		const fs = pairFrames({ seed: 500 + seed, states: 6, windows: 600 + 3600, withinRate_per_s: (W25 * 10) / 11, crossRate_per_s: W25 / 11, excess: 1.7, excessFrom: 600, transitions: tr });
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
