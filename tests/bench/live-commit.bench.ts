// The live case, one frame per message: the commit cost (send → ack) of the real built server
// against the raw ceiling (bare ws + JSON.parse + one INSERT per message into PGlite), and how much
// the data folder grows per frame over the first and the second half of GROWTH_FRAMES frames,
// read after the server's periodic maintenance has run. Same run, A/B interleaved, medians.
// Run: npm run build && npx tsx tests/bench/live-commit.bench.ts. Nothing here is asserted.
import { BenchAgent } from './support/agent';
import { RAW_BASELINE, startRawServer } from './support/children';
import { sizeFromEnv, sleep } from './support/env';
import { benchFrame } from './support/frames';
import { copySeed, folderBytes, migrationsDir, seedTemplate } from './support/seed';
import { MAINTENANCE_S, startAppServer } from './support/server';
import { median, percentile } from './support/stats';
import { printTable } from './support/table';
import { openDatabase } from '../../src/lib/server/db';
import { sql } from 'drizzle-orm';

/** Commits timed per side, in blocks alternating app / raw. */
const COMMIT_SAMPLES = sizeFromEnv('BENCH_LIVE_COMMITS', 400);
const BLOCK = 50;
/** Frames over which the data folder's growth is read (in two halves), sent by GROWTH_RUNS runs at once, each waiting for its ack. */
const GROWTH_FRAMES = sizeFromEnv('BENCH_LIVE_GROWTH_FRAMES', 20_000);
const GROWTH_RUNS = sizeFromEnv('BENCH_LIVE_GROWTH_RUNS', 10);
/** Wait before each size reading: one maintenance period and a margin. */
const SETTLE_MS = (MAINTENANCE_S + 3) * 1000;
const T0_MS = Date.UTC(2026, 0, 1);

/** Sends `count` frames one per message, each after the previous one's ack; returns the send→ack times. */
async function oneByOne(agent: BenchAgent, from: number, count: number): Promise<number[]> {
	const times: number[] = [];
	for (let seq = from + 1; seq <= from + count; seq++) times.push(await agent.commit([benchFrame(seq, T0_MS + seq * 1000)]));
	return times;
}

/** GROWTH_RUNS agents each sending its share of `frames` one by one; returns bytes/frame the folder grew by. */
async function grow(agents: BenchAgent[], next: number[], frames: number, dataDir: string, before: number) {
	const share = Math.ceil(frames / agents.length);
	await Promise.all(agents.map(async (a, i) => (await oneByOne(a, next[i], share), (next[i] += share))));
	await sleep(SETTLE_MS);
	const after = folderBytes(dataDir);
	return { perFrame: (after - before) / (share * agents.length), after };
}

async function rowSize(dataDir: string) {
	const { db, close } = await openDatabase(dataDir, migrationsDir);
	try {
		const rows = await db.execute<{ row_bytes: number; table_bytes: number; n: number }>(
			sql`SELECT avg(pg_column_size(f.*))::float8 AS row_bytes, pg_total_relation_size('frames')::float8 AS table_bytes, count(*)::float8 AS n FROM frames f`
		);
		const r = rows.rows[0];
		return { row: Number(r.row_bytes), tablePerRow: Number(r.table_bytes) / Number(r.n) };
	} finally {
		await close();
	}
}

async function main() {
	console.log(`live commits: ${COMMIT_SAMPLES} timed commits per side in blocks of ${BLOCK}; growth over ${GROWTH_FRAMES} frames from ${GROWTH_RUNS} runs, 1 frame/message; size read ${SETTLE_MS / 1000} s after the last frame (maintenance every ${MAINTENANCE_S} s)`);
	const template = await seedTemplate();
	const appSeed = copySeed(template, 'live-app');
	const rawSeed = copySeed(template, 'live-raw');
	const app = await startAppServer(appSeed.dataDir);
	const raw = await startRawServer(rawSeed.dataDir, rawSeed.setupId);
	try {
		// Commit cost: one run on each side, blocks alternating which side goes first.
		const appAgent = await BenchAgent.open(app.wsUrl, appSeed.token, 'live-commit');
		const rawAgent = await BenchAgent.open(raw.wsUrl, rawSeed.token, 'live-commit');
		await oneByOne(appAgent, 0, BLOCK);
		await oneByOne(rawAgent, 0, BLOCK);
		const times = { app: [] as number[], raw: [] as number[] };
		let seq = BLOCK;
		for (let b = 0; b * BLOCK < COMMIT_SAMPLES; b++) {
			const pair = b % 2 === 0 ? ([['app', appAgent], ['raw', rawAgent]] as const) : ([['raw', rawAgent], ['app', appAgent]] as const);
			for (const [name, agent] of pair) times[name].push(...(await oneByOne(agent, seq, BLOCK)));
			seq += BLOCK;
		}
		await appAgent.close();
		await rawAgent.close();

		// Growth: both sides take the first half, then both the second half.
		const open = (url: string, token: string, side: string) =>
			Promise.all(Array.from({ length: GROWTH_RUNS }, (_, i) => BenchAgent.open(url, token, `live-growth-${side}-${i}`)));
		const appRuns = await open(app.wsUrl, appSeed.token, 'app');
		const rawRuns = await open(raw.wsUrl, rawSeed.token, 'raw');
		const appNext = appRuns.map(() => 0);
		const rawNext = rawRuns.map(() => 0);
		await sleep(SETTLE_MS);
		let appBytes = folderBytes(appSeed.dataDir);
		let rawBytes = folderBytes(rawSeed.dataDir);
		const halves: { app: number; raw: number }[] = [];
		for (let half = 0; half < 2; half++) {
			const a = await grow(appRuns, appNext, GROWTH_FRAMES / 2, appSeed.dataDir, appBytes);
			const r = await grow(rawRuns, rawNext, GROWTH_FRAMES / 2, rawSeed.dataDir, rawBytes);
			appBytes = a.after;
			rawBytes = r.after;
			halves.push({ app: a.perFrame, raw: r.perFrame });
			console.log(`half ${half + 1}: app ${a.perFrame.toFixed(0)} B/frame, raw ${r.perFrame.toFixed(0)} B/frame`);
		}
		await Promise.all([...appRuns, ...rawRuns].map((a) => a.close()));
		await app.stop();
		await raw.stop();
		const rawRow = await rowSize(rawSeed.dataDir);

		const half = GROWTH_FRAMES / 2;
		printTable(
			'Live ingest, one frame per message',
			[
				{ measure: 'commit cost, send → ack, median', app: median(times.app), baseline: median(times.raw), unit: 'ms', target: { on: 'ratio', atMost: 2 } },
				{ measure: 'commit cost, send → ack, p95', app: percentile(times.app, 0.95), baseline: percentile(times.raw, 0.95), unit: 'ms', target: { on: 'none' } },
				{ measure: `folder growth per frame, frames 1–${half}`, app: halves[0].app / 1024, baseline: halves[0].raw / 1024, unit: 'kB', target: { on: 'app', atMost: 2, unit: 'kB' } },
				{ measure: `folder growth per frame, frames ${half + 1}–${GROWTH_FRAMES}`, app: halves[1].app / 1024, baseline: halves[1].raw / 1024, unit: 'kB', target: { on: 'app', atMost: 2, unit: 'kB' } },
				{ measure: 'growth per frame, second half ÷ first half', app: halves[1].app / halves[0].app, baseline: halves[1].raw / halves[0].raw, unit: '', target: { on: 'none' } }
			],
			[
				`raw frame row: ${rawRow.row.toFixed(0)} B (pg_column_size), ${rawRow.tablePerRow.toFixed(0)} B per row in the frames table with its index and TOAST (pg_total_relation_size / rows), baseline database`,
				`baseline: ${RAW_BASELINE}`,
				`growth: apparent size of every file in the data folder, read ${SETTLE_MS / 1000} s after the last ack`
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
