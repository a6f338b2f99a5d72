// How much a replay holds up the main thread's event loop: the engine on the main thread (as the
// replay ran before) against the engine in a worker fed pages, over the same frames in the same
// run. The figure is the event loop's delay while each runs, and its ratio between the two.
// Run: npx tsx tests/bench/replay-worker.bench.ts   (BENCH_FRAMES=86400 for a day at 1 frame/s)
// Not part of the test suite: nothing here is asserted. Frames come from memory, so the database
// reads (which remain on the main thread, a page at a time) are not in these figures.
import { monitorEventLoopDelay, performance } from 'node:perf_hooks';
import { replayIncidents, replayRun } from '../../src/lib/detect';
import type { Frame } from '../../src/lib/protocol/frame';
import { noiseFactor } from '../../src/lib/physics/occupation';
import { replayInWorker } from '../../src/lib/server/replay/replay-in-worker';
import type { FramePage } from '../../src/lib/server/replay/worker-protocol';
import { ringFrames } from '../unit/detect/sim';

const FRAMES = Number(process.env.BENCH_FRAMES ?? 43_200);
const PAGE = 500;

const model = { process: 'switching' as const, W0_per_s: 74.2, A: 6, mode_GHz: 1, nominal_mK: 20 };
const W = (T: number) => model.W0_per_s * Math.exp(-model.A / noiseFactor(model.mode_GHz, T));
const T = (i: number) => 20 + 1.5 * Math.sin((2 * Math.PI * i) / 20_000);
const frames: Frame[] = ringFrames({ seed: 7, states: 6, windows: FRAMES, shots: 200, rate_per_s: (i) => W(T(i)), T_mK: T });
const run = { runId: 'bench', states: 6, rateModels: { switching: model } };

async function* pages(): AsyncGenerator<FramePage> {
	for (let at = 0; at < frames.length; at += PAGE) {
		const page = frames.slice(at, at + PAGE);
		yield { frames: page, receivedAt_ms: page.map((f) => f.t) };
		await new Promise((r) => setImmediate(r));
	}
}

/** Runs `work` while a 1 ms timer keeps asking for the event loop; returns its delays (ms). */
async function underLoad(label: string, work: () => Promise<number>) {
	const h = monitorEventLoopDelay({ resolution: 1 });
	const ticker = setInterval(() => {}, 1);
	h.enable();
	const t0 = performance.now();
	const incidents = await work();
	const wall = performance.now() - t0;
	// The histogram records a stall when its timer next fires: give it the chance before reading.
	await new Promise((r) => setTimeout(r, 20));
	h.disable();
	clearInterval(ticker);
	const ms = (ns: number) => ns / 1e6;
	const r = { label, wall, p50: ms(h.percentile(50)), max: ms(h.max), incidents };
	console.log(
		`${label.padEnd(34)} wall ${wall.toFixed(0).padStart(6)} ms   loop delay p50 ${r.p50.toFixed(1).padStart(7)} ms  max ${r.max.toFixed(1).padStart(8)} ms   ${incidents} incidents`
	);
	return r;
}

// Warm both paths once (designs, worker start-up, tsx compile).
replayRun(frames.slice(0, 2000), {}, run);
const warm = async function* () {
	yield { frames: frames.slice(0, 2000), receivedAt_ms: frames.slice(0, 2000).map((f) => f.t) };
};
await replayInWorker(warm(), { rules: {}, run });

const main = await underLoad('engine on the main thread', async () => {
	await new Promise((r) => setTimeout(r, 5));
	return replayIncidents(replayRun(frames, {}, run, { receivedAt_ms: (f) => f.t })).length;
});
const worker = await underLoad(
	'engine in a worker, pages of 500',
	async () => (await replayInWorker(pages(), { rules: {}, run })).incidents.length
);
// A worker starts afresh for each replay; from source it compiles the engine through tsx first.
const s0 = performance.now();
await replayInWorker(warm(), { rules: {}, run });
const startUp = performance.now() - s0;

console.log('');
console.log(`frames: ${FRAMES}; same incidents both ways: ${main.incidents === worker.incidents}`);
console.log(`max loop delay, worker / main thread: ${(worker.max / main.max).toFixed(3)}`);
console.log(`wall time, worker / main thread:      ${(worker.wall / main.wall).toFixed(2)}`);
console.log(
	`a worker's start with 2000 frames / main-thread replay: ${(startUp / main.wall).toFixed(2)} (start-up counts in the wall time above)`
);
