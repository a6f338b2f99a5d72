// Bulk ingest at 500 frames per message, one run and ten runs at once: the real built server with
// agent-token WebSockets against the raw ceiling (bare ws + JSON.parse + one multi-row INSERT per
// message into PGlite, ack after commit), timed in the same run, A/B interleaved, medians.
// Run: npm run build && npx tsx tests/bench/bulk-ingest.bench.ts. Nothing here is asserted.
import { performance } from 'node:perf_hooks';
import { BenchAgent } from './support/agent';
import { RAW_BASELINE, startRawServer } from './support/children';
import { sizeFromEnv } from './support/env';
import { copySeed, seedTemplate } from './support/seed';
import { startAppServer } from './support/server';
import { median } from './support/stats';
import { printTable } from './support/table';

/** Frames of the single-run trial. */
const SINGLE_FRAMES = sizeFromEnv('BENCH_BULK_FRAMES', 10_000);
/** Runs streaming at once in the concurrent trial, and frames each of them sends. */
const RUNS = sizeFromEnv('BENCH_BULK_RUNS', 10);
const FRAMES_PER_RUN = sizeFromEnv('BENCH_BULK_FRAMES_PER_RUN', 2_000);
const PER_MESSAGE = 500;
/** Unacked messages an agent keeps in flight. */
const IN_FLIGHT = sizeFromEnv('BENCH_BULK_IN_FLIGHT', 4);
/** Short trials, many pairs: on a shared machine the load changes from one minute to the next. */
const REPEATS = sizeFromEnv('BENCH_REPEATS', 9);
const T0_MS = Date.UTC(2026, 0, 1);

interface Target {
	name: 'app' | 'raw';
	wsUrl: string;
	token: string;
}

let trial = 0;

/** The app ÷ raw ratio of each A/B pair: their median is the table's ratio, steadier than a ratio of medians. */
const pairRatios = (r: { app: number[]; raw: number[] }) => r.app.map((a, i) => a / r.raw[i]);
const pairs = (r: { app: number[]; raw: number[] }) =>
	pairRatios(r)
		.map((x) => x.toFixed(2))
		.join(', ');

/** Frames per second of `runs` agents streaming `perRun` frames each at once (connecting not timed). */
async function streamRate(target: Target, runs: number, perRun: number): Promise<number> {
	trial++;
	const agents = await Promise.all(
		Array.from({ length: runs }, (_, i) => BenchAgent.open(target.wsUrl, target.token, `bulk-${trial}-${i}`))
	);
	const t0 = performance.now();
	await Promise.all(agents.map((a) => a.stream(a.lastSeqAtWelcome, perRun, PER_MESSAGE, IN_FLIGHT, T0_MS)));
	const elapsed_s = (performance.now() - t0) / 1000;
	await Promise.all(agents.map((a) => a.close()));
	const errors = agents.flatMap((a) => a.errors);
	if (errors.length) throw new Error(`${target.name}: ${errors.length} errors, first: ${errors[0]}`);
	return (runs * perRun) / elapsed_s;
}

async function main() {
	console.log(
		`bulk ingest: ${SINGLE_FRAMES} frames on one run; ${RUNS} runs × ${FRAMES_PER_RUN} frames at once; ${PER_MESSAGE} frames/message, ${IN_FLIGHT} in flight; ${REPEATS} repeats, A/B interleaved`
	);
	const template = await seedTemplate();
	const appSeed = copySeed(template, 'bulk-app');
	const rawSeed = copySeed(template, 'bulk-raw');
	const app = await startAppServer(appSeed.dataDir);
	const raw = await startRawServer(rawSeed.dataDir, rawSeed.setupId);
	try {
		const targets: Target[] = [
			{ name: 'app', wsUrl: app.wsUrl, token: appSeed.token },
			{ name: 'raw', wsUrl: raw.wsUrl, token: rawSeed.token }
		];
		// Warm both (JIT, PGlite caches) before timing.
		for (const t of targets) await streamRate(t, 2, 2_000);
		const single = { app: [] as number[], raw: [] as number[] };
		const many = { app: [] as number[], raw: [] as number[] };
		for (let rep = 0; rep < REPEATS; rep++) {
			// A/B then B/A, so a slow drift of the machine falls on both sides.
			const order = rep % 2 === 0 ? targets : [...targets].reverse();
			for (const t of order) single[t.name].push(await streamRate(t, 1, SINGLE_FRAMES));
			for (const t of order) many[t.name].push(await streamRate(t, RUNS, FRAMES_PER_RUN));
			console.log(
				`repeat ${rep + 1}: single app ${single.app.at(-1)!.toFixed(0)} raw ${single.raw.at(-1)!.toFixed(0)}; ${RUNS} runs app ${many.app.at(-1)!.toFixed(0)} raw ${many.raw.at(-1)!.toFixed(0)} frames/s`
			);
		}
		printTable(
			'Bulk ingest, 500 frames per message (frames/s, median)',
			[
				{
					measure: 'one run',
					app: median(single.app),
					baseline: median(single.raw),
					ratio: median(pairRatios(single)),
					unit: 'frames/s',
					target: { on: 'ratio', atLeast: 0.6 }
				},
				{
					measure: `${RUNS} runs at once`,
					app: median(many.app),
					baseline: median(many.raw),
					ratio: median(pairRatios(many)),
					unit: 'frames/s',
					target: { on: 'ratio', atLeast: 0.6 }
				}
			],
			[
				`baseline: ${RAW_BASELINE}`,
				`ratio = median of the A/B pairs' ratios; each pair, one run: ${pairs(single)}; ${RUNS} runs: ${pairs(many)}`
			]
		);
	} finally {
		await app.stop();
		await raw.stop();
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
