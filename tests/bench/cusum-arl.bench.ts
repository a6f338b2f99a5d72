// The Poisson CUSUM's in-control run length at the designed h, from 0.05 to 20 counts per step:
// the exact chain (stats/cusum.ts) against the lattice chains whose k lies just below and just
// above the true k (they bracket it: the run length is monotone in k) and against a long seeded
// Monte Carlo of the recursion. Run: npx tsx tests/bench/cusum-arl.bench.ts
// (BENCH_TARGET, BENCH_RUNS and BENCH_LATTICE_STATES change the target run length, the number of
// simulated runs per row and the largest lattice). Not part of the test suite: nothing is asserted.
import { poissonCusumArl, poissonCusumDecisionInterval } from '../../src/lib/stats/cusum';
import { bracketingLattices, poissonCusumArlOnLattice } from '../support/poisson-cusum-lattice';
import { simulatePoissonCusumArl } from '../support/poisson-cusum-mc';

const TARGET = Number(process.env.BENCH_TARGET ?? 200);
const RUNS = Number(process.env.BENCH_RUNS ?? 400_000);
const LATTICE_STATES = Number(process.env.BENCH_LATTICE_STATES ?? 1200);
const MUS = [0.05, 0.1, 0.2, 0.5, 1, 2, 5, 10, 20];

const pct = (x: number) => `${x >= 0 ? '+' : ''}${(100 * x).toFixed(3)} %`;
const rows: string[] = [];
rows.push(`Target in-control run length ${TARGET} steps; Monte Carlo ${RUNS} runs per row; lattices up to ${LATTICE_STATES} states.`);
rows.push(
	'| ρ | μ/step | h | ARL chain | lattice k↓ | lattice k↑ | (lattice − chain)/chain, k↓ / k↑ | ARL MC ± SE | (MC − chain)/chain | z |'
);
rows.push('|---|---|---|---|---|---|---|---|---|---|');
let seed = 1000;
for (const rho of [2, 0.5]) {
	for (const mu of MUS) {
		const h = poissonCusumDecisionInterval(TARGET, rho, mu);
		const chain = poissonCusumArl(h, rho, mu);
		const k = (mu * (rho - 1)) / Math.log(rho);
		const maxSteps = Math.floor(LATTICE_STATES / (h / Math.abs(Math.log(rho))));
		const { below, above } = bracketingLattices(k, 1, maxSteps);
		const low = poissonCusumArlOnLattice(h, rho, mu, 1, below.m, below.kSteps).arl;
		const high = poissonCusumArlOnLattice(h, rho, mu, 1, above.m, above.kSteps).arl;
		const mc = simulatePoissonCusumArl({ h, rho, mu, runs: RUNS, seed: seed++ });
		rows.push(
			`| ${rho} | ${mu} | ${h.toFixed(4)} | ${chain.toFixed(2)} | ${low.toFixed(2)} (k${(below.kSteps / below.m - k).toExponential(1)}) | ${high.toFixed(2)} (k+${(above.kSteps / above.m - k).toExponential(1)}) | ${pct(low / chain - 1)} / ${pct(high / chain - 1)} | ${mc.mean.toFixed(2)} ± ${mc.se.toFixed(2)} | ${pct(mc.mean / chain - 1)} | ${((mc.mean - chain) / mc.se).toFixed(2)} |`
		);
		console.error(rows[rows.length - 1]);
	}
}
console.log(rows.join('\n'));
