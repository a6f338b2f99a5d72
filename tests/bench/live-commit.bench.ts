// The live case, one frame per message: the commit cost (send → ack) of the real built server
// against the raw ceiling (bare ws + JSON.parse + one INSERT per message into PGlite), A/B
// interleaved in the same run, medians; and how much the app's data folder grows per frame over
// the first and the second half of GROWTH_FRAMES frames, read after the server's periodic
// maintenance has run, beside the raw baseline's stored bytes per frame row.
// Run: npm run build && npx tsx tests/bench/live-commit.bench.ts. Nothing here is asserted.
import { sql } from 'drizzle-orm';
import { openDatabase } from '../../src/lib/server/db';
import { BenchAgent } from './support/agent';
import { RAW_BASELINE, startRawServer } from './support/children';
import { sizeFromEnv, sleep } from './support/env';
import { benchFrame } from './support/frames';
import { copySeed, folderBytes, migrationsDir, seedTemplate } from './support/seed';
import { MAINTENANCE_S, startAppServer } from './support/server';
import { median, percentile } from './support/stats';
import { printTable } from './support/table';

/** Commits timed per side, in blocks alternating app / raw. */
const COMMIT_SAMPLES = sizeFromEnv('BENCH_LIVE_COMMITS', 400);
const BLOCK = 50;
/** Frames over which the app's data folder growth is read (in two halves), sent by GROWTH_RUNS runs at once, each waiting for its ack. */
const GROWTH_FRAMES = sizeFromEnv('BENCH_LIVE_GROWTH_FRAMES', 20_000);
const GROWTH_RUNS = sizeFromEnv('BENCH_LIVE_GROWTH_RUNS', 10);
/** Frames stored in the raw baseline (in bulk) before its bytes per row are read. */
const RAW_ROWS = 5_000;
/** Wait before each size reading: one maintenance period and a margin. */
const SETTLE_MS = (MAINTENANCE_S + 3) * 1000;
const T0_MS = Date.UTC(2026, 0, 1);

/** Sends `count` frames one per message, each after the previous one's ack; returns the send→ack times. */
async function oneByOne(agent: BenchAgent, from: number, count: number): Promise<number[]> {
	const times: number[] = [];
	for (let seq = from + 1; seq <= from + count; seq++) times.push(await agent.commit([benchFrame(seq, T0_MS + seq * 1000)]));
	return times;
}

interface FolderSize {
	all: number;
	withoutWal: number;
}

const sizeOf = (dir: string): FolderSize => ({ all: folderBytes(dir), withoutWal: folderBytes(dir, ['pg_wal']) });

/** Bytes a frame row takes in the baseline database: the row itself, and the table with its index and TOAST per row. */
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
	console.log(
		`live commits: ${COMMIT_SAMPLES} timed commits per side in blocks of ${BLOCK}; app folder growth over ${GROWTH_FRAMES} frames from ${GROWTH_RUNS} runs, 1 frame/message, read ${SETTLE_MS / 1000} s after the last ack (maintenance every ${MAINTENANCE_S} s)`
	);
	const template = await seedTemplate();
	const appSeed = copySeed(template, 'live-app');
	const rawSeed = copySeed(template, 'live-raw');
	const app = await startAppServer(appSeed.dataDir, { PHASEWARDEN_MAINTENANCE_S: String(MAINTENANCE_S) });
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
			const pair =
				b % 2 === 0
					? ([
							['app', appAgent],
							['raw', rawAgent]
						] as const)
					: ([
							['raw', rawAgent],
							['app', appAgent]
						] as const);
			for (const [name, agent] of pair) times[name].push(...(await oneByOne(agent, seq, BLOCK)));
			seq += BLOCK;
		}
		await appAgent.close();
		await rawAgent.close();
		const rawRows = await BenchAgent.open(raw.wsUrl, rawSeed.token, 'live-rows');
		await rawRows.stream(0, RAW_ROWS, 500, 4, T0_MS);
		await rawRows.close();
		await raw.stop();
		const rawRow = await rowSize(rawSeed.dataDir);

		// Growth of the app's folder, read after maintenance at the start, the middle and the end.
		const runs = await Promise.all(
			Array.from({ length: GROWTH_RUNS }, (_, i) => BenchAgent.open(app.wsUrl, appSeed.token, `live-growth-${i}`))
		);
		const share = Math.ceil(GROWTH_FRAMES / 2 / GROWTH_RUNS);
		const half = share * GROWTH_RUNS;
		await sleep(SETTLE_MS);
		const sizes: FolderSize[] = [sizeOf(appSeed.dataDir)];
		for (let h = 0; h < 2; h++) {
			await Promise.all(runs.map((a) => oneByOne(a, h * share, share)));
			await sleep(SETTLE_MS);
			sizes.push(sizeOf(appSeed.dataDir));
			console.log(
				`after ${(h + 1) * half} frames: folder ${(sizes[h + 1].all / 1e6).toFixed(1)} MB, without pg_wal ${(sizes[h + 1].withoutWal / 1e6).toFixed(1)} MB`
			);
		}
		await Promise.all(runs.map((a) => a.close()));
		const perFrame = (h: number, k: keyof FolderSize) => (sizes[h + 1][k] - sizes[h][k]) / half / 1024;

		printTable(
			'Live ingest, one frame per message',
			[
				{
					measure: 'commit cost, send → ack, median',
					app: median(times.app),
					baseline: median(times.raw),
					unit: 'ms',
					target: { on: 'ratio', atMost: 2 }
				},
				{
					measure: 'commit cost, send → ack, p95',
					app: percentile(times.app, 0.95),
					baseline: percentile(times.raw, 0.95),
					unit: 'ms',
					target: { on: 'none' }
				},
				{
					measure: `folder growth per frame, over all ${2 * half} frames`,
					app: (sizes[2].all - sizes[0].all) / (2 * half) / 1024,
					baseline: rawRow.tablePerRow / 1024,
					unit: 'kB',
					target: { on: 'app', atMost: 2, unit: 'kB' }
				},
				// Flat: the second half must grow no faster than the first. The first half of a new folder
				// also holds pg_wal's one-time growth to its minimum size (a 16 MB segment).
				{ measure: `… frames 1–${half}`, app: perFrame(0, 'all'), baseline: rawRow.tablePerRow / 1024, unit: 'kB', target: { on: 'none' } },
				{
					measure: `… frames ${half + 1}–${2 * half}`,
					app: perFrame(1, 'all'),
					baseline: rawRow.tablePerRow / 1024,
					unit: 'kB',
					target: { on: 'app', atMost: 2, unit: 'kB' }
				},
				{
					measure: `… without pg_wal, frames 1–${half}`,
					app: perFrame(0, 'withoutWal'),
					baseline: rawRow.tablePerRow / 1024,
					unit: 'kB',
					target: { on: 'none' }
				},
				{
					measure: `… without pg_wal, frames ${half + 1}–${2 * half}`,
					app: perFrame(1, 'withoutWal'),
					baseline: rawRow.tablePerRow / 1024,
					unit: 'kB',
					target: { on: 'none' }
				}
			],
			[
				`commit cost baseline: ${RAW_BASELINE}`,
				`growth baseline: the raw baseline's frames table with its index and TOAST per row (pg_total_relation_size / rows, ${RAW_ROWS} rows); one raw row is ${rawRow.row.toFixed(0)} B (pg_column_size)`,
				`growth: apparent size of every file in the app's data folder, read ${SETTLE_MS / 1000} s after the last ack; pg_wal grows in 16 MB segments up to max_wal_size, so it moves in steps`
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
