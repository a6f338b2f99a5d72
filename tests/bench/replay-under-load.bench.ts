// A live run's ack latency (one frame per message every 100 ms, on a fixed schedule) while a stored 24-hour run
// (86,400 one-second windows) is replayed through POST /api/runs/:id/replay, against the same live
// run's latency with no replay, measured in alternating idle / replay phases of the same run.
// Run: npm run build && npx tsx tests/bench/replay-under-load.bench.ts. Nothing here is asserted.
import { performance } from 'node:perf_hooks';
import { BenchAgent } from './support/agent';
import { sizeFromEnv, sleep } from './support/env';
import { benchFrame } from './support/frames';
import { copySeed, seedTemplate } from './support/seed';
import { signIn, startAppServer } from './support/server';
import { median, percentile } from './support/stats';
import { printTable } from './support/table';

/** Windows of the stored run (one per second: 86,400 is a day). */
const STORED_FRAMES = sizeFromEnv('BENCH_REPLAY_FRAMES', 86_400);
/** Replays timed, each preceded by an idle phase of IDLE_S. */
const REPLAYS = sizeFromEnv('BENCH_REPLAYS', 3);
const IDLE_S = sizeFromEnv('BENCH_REPLAY_IDLE_S', 10);
const LIVE_PERIOD_MS = 100;
const T0_MS = Date.UTC(2026, 0, 1);

interface Sample {
	sent_ms: number;
	latency_ms: number;
}

async function main() {
	console.log(
		`replay under load: stored run of ${STORED_FRAMES} frames; ${REPLAYS} replays, each after ${IDLE_S} s idle; live run sends 1 frame every ${LIVE_PERIOD_MS} ms`
	);
	const template = await seedTemplate();
	const seed = copySeed(template, 'replay');
	const app = await startAppServer(seed.dataDir);
	try {
		const stored = await BenchAgent.open(app.wsUrl, seed.token, 'replay-day');
		const t0 = performance.now();
		await stored.stream(0, STORED_FRAMES, 500, 4, T0_MS);
		console.log(`stored ${STORED_FRAMES} frames in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
		stored.ws.send(JSON.stringify({ type: 'end', reason: 'benchmark day stored' }));
		await stored.close();
		const observer = await signIn(app);

		// The live run: one frame every LIVE_PERIOD_MS on a fixed schedule, not waiting for acks, so a
		// stall shows in every frame it delays (an ack covers every seq up to its own).
		const live = await BenchAgent.open(app.wsUrl, seed.token, 'replay-live');
		const samples: Sample[] = [];
		const pending: Promise<void>[] = [];
		let running = true;
		const liveLoop = (async () => {
			const start = performance.now();
			for (let seq = 1; running; seq++) {
				const sent = performance.now();
				live.send([benchFrame(seq, Date.now())]);
				pending.push(live.ackOf(seq).then((at) => void samples.push({ sent_ms: sent, latency_ms: at - sent })));
				await sleep(Math.max(0, start + seq * LIVE_PERIOD_MS - performance.now()));
			}
		})();

		const replayWindows: [number, number][] = [];
		const idleWindows: [number, number][] = [];
		const replay_ms: number[] = [];
		await sleep(2_000); // warm the live path
		for (let r = 0; r < REPLAYS; r++) {
			const idleStart = performance.now();
			await sleep(IDLE_S * 1000);
			idleWindows.push([idleStart, performance.now()]);
			const start = performance.now();
			const res = await observer.fetch(`/api/runs/${stored.runId}/replay`, { method: 'POST', body: '{}' });
			const body = (await res.json()) as { frameCount?: number };
			const end = performance.now();
			if (!res.ok || body.frameCount !== STORED_FRAMES)
				throw new Error(`replay answered ${res.status} with ${body.frameCount} frames, expected ${STORED_FRAMES}`);
			replayWindows.push([start, end]);
			replay_ms.push(end - start);
			console.log(`replay ${r + 1}: ${(end - start).toFixed(0)} ms`);
		}
		running = false;
		await liveLoop;
		await Promise.all(pending);
		await live.close();

		const within = (windows: [number, number][]) =>
			samples.filter((s) => windows.some(([a, b]) => s.sent_ms >= a && s.sent_ms < b)).map((s) => s.latency_ms);
		const idle = within(idleWindows);
		const busy = within(replayWindows);
		printTable(
			'Live ack latency while a 24-hour run is replayed',
			[
				{
					measure: `live ack latency, median (${busy.length} during replay / ${idle.length} idle)`,
					app: median(busy),
					baseline: median(idle),
					unit: 'ms',
					target: { on: 'ratio', atMost: 3 }
				},
				{
					measure: 'live ack latency, p95',
					app: percentile(busy, 0.95),
					baseline: percentile(idle, 0.95),
					unit: 'ms',
					target: { on: 'ratio', atMost: 3 }
				},
				{ measure: 'live ack latency, max', app: Math.max(...busy), baseline: Math.max(...idle), unit: 'ms', target: { on: 'none' } }
			],
			[
				`app = during a replay, baseline = the same live run with no replay (idle phases alternate with replays); replay of ${STORED_FRAMES} frames took ${median(replay_ms).toFixed(0)} ms (median)`
			]
		);
	} finally {
		await app.stop();
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
