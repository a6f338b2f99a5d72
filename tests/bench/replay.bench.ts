// Speed of replaying a 24-hour run at one frame per second through the detector engine, as ratios
// to baselines over the same frames timed in the same run. Run: npx tsx tests/bench/replay.bench.ts
// Not part of the test suite: nothing here is asserted.
import { performance } from 'node:perf_hooks';
import { replayRun } from '../../src/lib/detect';
import { frameSchema, type Frame } from '../../src/lib/protocol/frame';
import { noiseFactor } from '../../src/lib/physics/occupation';
import { ringFrames } from '../unit/detect/sim';

const FRAMES = Number(process.env.BENCH_FRAMES ?? 86_400);
const REPEATS = 3;

const model = { process: 'switching' as const, W0_per_s: 74.2, A: 6, mode_GHz: 1, nominal_mK: 20 };
const W = (T: number) => model.W0_per_s * Math.exp(-model.A / noiseFactor(model.mode_GHz, T));
// A night with a slow fridge wander, a switching burst and a stretch of doubled rate.
const T = (i: number) => 20 + 1.5 * Math.sin((2 * Math.PI * i) / 20_000);
const frames: Frame[] = ringFrames({
	seed: 7,
	states: 6,
	windows: FRAMES,
	shots: 200,
	rate_per_s: (i) => W(T(i)) * (i >= 40_000 && i < 40_010 ? 20 : 1) * (i >= 60_000 && i < 62_000 ? 2 : 1),
	T_mK: T
});
const run = { runId: 'bench', states: 6, rateModels: { switching: model } };

let sink = 0;

function time(label: string, fn: () => number, warm = true): number {
	if (warm) fn();
	let best = Infinity;
	for (let i = 0; i < REPEATS; i++) {
		const t0 = performance.now();
		sink += fn();
		best = Math.min(best, performance.now() - t0);
	}
	console.log(`${label.padEnd(46)} ${best.toFixed(1).padStart(9)} ms  ${((FRAMES / best) * 1000).toFixed(0).padStart(10)} frames/s`);
	return best;
}

// Baseline 1: a loop that reads every field a detector reads.
const plain = time('baseline: loop over the frames’ fields', () => {
	let s = 0;
	for (const f of frames) {
		s += f.switches + f.dwell_s + f.lock + (f.aux?.mxc_mK ?? 0);
		for (const c of f.counts) s += c;
		if (f.transitions) for (const c of f.transitions) s += c;
	}
	return s;
});
// Baseline 2: what ingest already does to every frame — validate it with the wire schema.
const validate = time('baseline: frameSchema.safeParse of each frame', () => {
	let ok = 0;
	for (const f of frames) if (frameSchema.safeParse(f).success) ok++;
	return ok;
});

const t0 = performance.now();
const coldEvents = replayRun(frames, {}, run);
const cold = performance.now() - t0;
console.log(
	`${'replay, first run (designs computed)'.padEnd(46)} ${cold.toFixed(1).padStart(9)} ms  ${((FRAMES / cold) * 1000).toFixed(0).padStart(10)} frames/s`
);
const replay = time('replay, default rules, switching model', () => replayRun(frames, {}, run).length);
const noModel = time('replay, default rules, no rate model', () => replayRun(frames, {}, { states: 6 }).length);

console.log('');
console.log(
	`events in the replay: ${coldEvents.length} (${[...new Set(coldEvents.filter((e) => e.type === 'open').map((e) => e.kind))].join(', ')})`
);
console.log(`replay / plain loop:        ${(replay / plain).toFixed(1)} × the time`);
console.log(`replay / schema validation: ${(replay / validate).toFixed(2)} × the time`);
console.log(`no model / schema validation: ${(noModel / validate).toFixed(2)} × the time`);
console.log(`first run / warm run:       ${(cold / replay).toFixed(2)} × the time`);
if (sink === 0.5) console.log('');
