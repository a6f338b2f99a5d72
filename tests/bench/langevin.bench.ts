// Speed of the Langevin simulator, single-threaded and in a worker_threads worker, as ratios to
// plain reference loops timed in the same run. Run: npx tsx tests/bench/langevin.bench.ts
// Not part of the test suite: nothing here is asserted.
import { Worker } from 'node:worker_threads';
import { performance } from 'node:perf_hooks';
import { estimateEscapeRate, estimateWellToWellRate, HeunStepper } from '../../src/lib/physics/langevin';
import { makeDrift, type ModelParams } from '../../src/lib/physics/model';
import { Rng } from '../../src/lib/physics/random';
import { runInWorker } from '../../src/lib/physics/run-in-worker';
import type { EscapeResult } from '../../src/lib/physics/langevin';

const STEPS = Number(process.env.BENCH_STEPS ?? 2e7);
const REPEATS = 3;

const params: ModelParams = { order: 3, detuning: 0, damping: 1, drive: 1 / 3, nonlinearity: { kind: 'kerr', K: 0.157 } };
// λ small enough that escapes are rare: the estimator then runs close to STEPS steps per trajectory.
const escapeOptions = { lambda: 0.05, noiseFactor: 1, trajectories: 2, maxTime: 0, seed: 1 };

/** Best of REPEATS timings (ms) of fn, after one warm-up call; fn returns the steps it took. */
function time(fn: () => number): { ms: number; steps: number } {
	fn();
	let best = Infinity;
	let steps = 0;
	for (let i = 0; i < REPEATS; i++) {
		const t0 = performance.now();
		steps = fn();
		best = Math.min(best, performance.now() - t0);
	}
	return { ms: best, steps };
}

let sink = 0; // keeps the reference loops from being optimised away

// Reference 1: the cheapest loop with a random draw — Math.random plus a multiply-add.
function referencePlain(): number {
	let x = 0;
	for (let i = 0; i < STEPS; i++) x = 0.999 * x + Math.random();
	sink += x;
	return STEPS;
}

// Reference 2: what a step must at least do — two Gaussian draws from the simulator's generator
// and a multiply-add per quadrature.
function referenceGaussian(): number {
	const rng = new Rng(1);
	let x = 0;
	let y = 0;
	for (let i = 0; i < STEPS; i++) {
		x = 0.999 * x + rng.nextGaussian();
		y = 0.999 * y + rng.nextGaussian();
	}
	sink += x + y;
	return STEPS;
}

function bareStepper(): number {
	const st = new HeunStepper(makeDrift(params), 0.01, 0.05, new Rng(2));
	for (let i = 0; i < STEPS; i++) st.step();
	sink += st.x;
	return STEPS;
}

function escapeEstimator(): number {
	const dt = estimateEscapeRate(params, { ...escapeOptions, maxTime: 1 }).dt;
	const r = estimateEscapeRate(params, { ...escapeOptions, maxTime: (STEPS / escapeOptions.trajectories) * dt });
	return r.steps;
}

function overdamped(): number {
	const r = estimateWellToWellRate({
		potentialDerivative: (x) => -x + x * x * x,
		D: 0.05,
		dt: 0.02,
		duration: STEPS * 0.02,
		seed: 3,
		wells: [-1, 1]
	});
	return r.steps;
}

async function inWorker(): Promise<{ ms: number; steps: number }> {
	const entry = new URL('../../src/lib/physics/langevin-node-worker.ts', import.meta.url).href;
	const worker = new Worker(`import('tsx/esm/api').then(({ register }) => { register(); return import(${JSON.stringify(entry)}); })`, {
		eval: true
	});
	try {
		const dt = estimateEscapeRate(params, { ...escapeOptions, maxTime: 1 }).dt;
		const job = {
			kind: 'escape' as const,
			params,
			options: { ...escapeOptions, maxTime: (STEPS / escapeOptions.trajectories) * dt }
		};
		await runInWorker(worker, job); // warm-up, includes module loading
		let best = Infinity;
		let steps = 0;
		for (let i = 0; i < REPEATS; i++) {
			const t0 = performance.now();
			const r = (await runInWorker(worker, job)) as EscapeResult;
			best = Math.min(best, performance.now() - t0);
			steps = r.steps;
		}
		return { ms: best, steps };
	} finally {
		await worker.terminate();
	}
}

async function main() {
	const rows: Array<[string, { ms: number; steps: number }]> = [];
	rows.push(['reference: Math.random + multiply-add', time(referencePlain)]);
	rows.push(['reference: 2 Gaussians + 2 multiply-adds', time(referenceGaussian)]);
	rows.push(['Heun step, M = 3 Kerr (bare loop)', time(bareStepper)]);
	rows.push(['escape estimator, main thread', time(escapeEstimator)]);
	rows.push(['escape estimator, worker thread', await inWorker()]);
	rows.push(['1-D overdamped (well-to-well)', time(overdamped)]);

	const rate = (r: { ms: number; steps: number }) => r.steps / (r.ms / 1000);
	const plain = rate(rows[0][1]);
	const gauss = rate(rows[1][1]);
	const w = Math.max(...rows.map(([n]) => n.length));
	console.log(`Langevin benchmark: ${STEPS.toExponential(1)} steps per timing, best of ${REPEATS}`);
	console.log(`${'loop'.padEnd(w)}  ${'steps/s'.padStart(10)}  ${'÷ plain'.padStart(8)}  ${'÷ gauss'.padStart(8)}`);
	for (const [name, r] of rows) {
		const s = rate(r);
		console.log(
			`${name.padEnd(w)}  ${s.toExponential(2).padStart(10)}  ${(s / plain).toFixed(3).padStart(8)}  ${(s / gauss).toFixed(3).padStart(8)}`
		);
	}
	if (sink === 42) console.log(''); // use the sink
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
