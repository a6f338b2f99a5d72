// Server memory under a live load: LIVE_RUNS agents at one frame per second and DASHBOARDS open
// event streams (/api/events, signed in), against the bare database process — a node process that
// only opens the same data folder with openDatabase and idles. Resident sizes from /proc.
// Run: npm run build && npx tsx tests/bench/memory.bench.ts. Nothing here is asserted.
import { BenchAgent } from './support/agent';
import { startBareDb } from './support/children';
import { sizeFromEnv, sleep } from './support/env';
import { benchFrame } from './support/frames';
import { copySeed, seedTemplate } from './support/seed';
import { rssMB, signIn, startAppServer } from './support/server';
import { openEventStream } from './support/sse';
import { printTable } from './support/table';

const LIVE_RUNS = sizeFromEnv('BENCH_MEMORY_RUNS', 50);
const DASHBOARDS = sizeFromEnv('BENCH_MEMORY_DASHBOARDS', 20);
const LOAD_S = sizeFromEnv('BENCH_MEMORY_LOAD_S', 60);
/** Seconds a process idles before its resident size is read. */
const SETTLE_S = 5;

/** Resident size of the bare database process on `dataDir` after it idled SETTLE_S. */
async function bareRss(dataDir: string): Promise<number> {
	const bare = await startBareDb(dataDir);
	try {
		await sleep(SETTLE_S * 1000);
		return rssMB(bare.pid);
	} finally {
		await bare.stop();
	}
}

async function main() {
	console.log(`memory: ${LIVE_RUNS} live runs at 1 frame/s, ${DASHBOARDS} event streams, ${LOAD_S} s of load`);
	const template = await seedTemplate();
	const seed = copySeed(template, 'memory');
	const bareBefore = await bareRss(seed.dataDir);
	const app = await startAppServer(seed.dataDir);
	const appRss: number[] = [];
	let events = 0;
	try {
		const observer = await signIn(app);
		const streams = Array.from({ length: DASHBOARDS }, () =>
			openEventStream(`${app.url}/api/events`, observer.cookie, () => void events++)
		);
		await Promise.all(streams.map((s) => s.ready));
		const agents = await Promise.all(Array.from({ length: LIVE_RUNS }, (_, i) => BenchAgent.open(app.wsUrl, seed.token, `memory-${i}`)));
		const idleRss = rssMB(app.pid);
		// Each run sends its frame at its own offset within the second, as independent agents would.
		const timers = agents.map((agent, i) => {
			let seq = 0;
			let interval: NodeJS.Timeout | undefined;
			const start = setTimeout(
				() => {
					interval = setInterval(() => agent.send([benchFrame(++seq, Date.now())]), 1000);
				},
				(i * 1000) / LIVE_RUNS
			);
			return () => (clearTimeout(start), clearInterval(interval));
		});
		for (let s = 5; s <= LOAD_S; s += 5) {
			await sleep(5_000);
			appRss.push(rssMB(app.pid));
		}
		timers.forEach((stop) => stop());
		const acked = agents.reduce((n, a) => n + a.lastAck, 0);
		await Promise.all(agents.map((a) => a.close()));
		streams.forEach((s) => s.close());
		console.log(
			`server RSS every 5 s: ${appRss.map((r) => r.toFixed(0)).join(' ')} MB (${idleRss.toFixed(0)} MB with the sockets open, before frames); ${acked} frames acked, ${events} events delivered`
		);
	} finally {
		await app.stop();
	}
	const bareAfter = await bareRss(seed.dataDir);
	printTable(
		`Server memory, ${LIVE_RUNS} live runs at 1 Hz and ${DASHBOARDS} dashboards`,
		[
			{
				measure: `server RSS after ${LOAD_S} s`,
				app: appRss[appRss.length - 1],
				baseline: bareAfter,
				unit: 'MB',
				target: { on: 'difference', atMost: 100, unit: 'MB' }
			},
			{
				measure: 'server RSS, peak',
				app: Math.max(...appRss),
				baseline: bareAfter,
				unit: 'MB',
				target: { on: 'difference', atMost: 100, unit: 'MB' }
			}
		],
		[
			`baseline: node + openDatabase on the same data folder, idle ${SETTLE_S} s, read after the load (${bareAfter.toFixed(0)} MB; before the load ${bareBefore.toFixed(0)} MB)`
		]
	);
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
