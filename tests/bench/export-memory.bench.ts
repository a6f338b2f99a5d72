// Server memory and speed while exporting a 7-day run at 1 Hz (604,800 frames) as CSV and as NDJSON.
// RSS of the built server is sampled from /proc/<pid>/status every 20 ms during each download; the
// peak is compared with the idle server (target: within 50 MB). Speed is compared with the bare read
// of the same rows (the same keyset pages, straight from PGlite in this process, no formatting, no
// HTTP) timed in the same run. A second server with V8 left to size its own heap
// (PHASEWARDEN_V8_HEAP_GROWTH_PERCENT=0) gives the reference rows. Run: npm run bench:export (BENCH_EXPORT_FRAMES, BENCH_EXPORT_IQ_BINS).
import { openDatabase } from '../../src/lib/server/db';
import { framePages } from '../../src/lib/server/runs/frame-pages';
import { sizeFromEnv, sleep } from './support/env';
import { migrationsDir } from './support/seed';
import { rssMB, signIn, startAppServer } from './support/server';
import { printTable, type BenchRow } from './support/table';
import { WEEK_T0_MS, weekRun, type WeekRun } from './support/week-run';

const FRAMES = sizeFromEnv('BENCH_EXPORT_FRAMES', 7 * 24 * 3600);
const IQ_BINS = sizeFromEnv('BENCH_EXPORT_IQ_BINS', 8);
const SETTLE_S = 5;
const SAMPLE_MS = 20;

interface Download {
	seconds: number;
	bytes: number;
	lines: number;
	peakMB: number;
}

async function download(fetcher: (p: string) => Promise<Response>, pathname: string, pid: number): Promise<Download> {
	let peakMB = rssMB(pid);
	const sampler = setInterval(() => (peakMB = Math.max(peakMB, rssMB(pid))), SAMPLE_MS);
	const started = performance.now();
	try {
		const res = await fetcher(pathname);
		if (!res.ok || !res.body) throw new Error(`${pathname}: HTTP ${res.status} ${await res.text()}`);
		let bytes = 0;
		let lines = 0;
		for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
			bytes += chunk.length;
			for (let i = chunk.indexOf(10); i >= 0; i = chunk.indexOf(10, i + 1)) lines++;
		}
		return { seconds: (performance.now() - started) / 1000, bytes, lines, peakMB: Math.max(peakMB, rssMB(pid)) };
	} finally {
		clearInterval(sampler);
	}
}

/** The baseline: the same pages of rows read bare, in this process. */
async function bareRead(dataDir: string, runId: string, withIq: boolean): Promise<{ seconds: number; rows: number }> {
	const { db, close } = await openDatabase(dataDir, migrationsDir);
	try {
		const started = performance.now();
		let rows = 0;
		for await (const page of framePages(db, runId, { withoutIq: !withIq, pageSize: withIq ? 250 : 2000 })) rows += page.length;
		return { seconds: (performance.now() - started) / 1000, rows };
	} finally {
		await close();
	}
}

interface Exports {
	idleMB: number;
	csv: Download;
	ndjson: Download;
}

/** A fresh server on a copy of the week's run: idle RSS after a warm-up, then both whole-run exports. */
async function exportsOn(week: WeekRun, env: Record<string, string>): Promise<Exports> {
	const app = await startAppServer(week.dataDir, env);
	try {
		const observer = await signIn(app);
		// Warm the route code and the database's first pages, then let the server settle.
		await (await observer.fetch(`/api/runs/${week.runId}/export.csv?from_ms=${WEEK_T0_MS}&to_ms=${WEEK_T0_MS + 3_600_000}`)).text();
		await sleep(SETTLE_S * 1000);
		const idleMB = rssMB(app.pid);
		const results = {} as Record<'csv' | 'ndjson', Download>;
		for (const format of ['csv', 'ndjson'] as const) {
			results[format] = await download(observer.fetch, `/api/runs/${week.runId}/export.${format}`, app.pid);
			const expectedLines = FRAMES + (format === 'csv' ? 1 : 0);
			if (results[format].lines !== expectedLines)
				throw new Error(`export.${format}: ${results[format].lines} lines, expected ${expectedLines}`);
			console.log(
				`  ${JSON.stringify(env)} export.${format}: ${(results[format].bytes / 1e6).toFixed(0)} MB in ${results[format].seconds.toFixed(1)} s, peak RSS ${results[format].peakMB.toFixed(0)} MB (idle ${idleMB.toFixed(0)} MB)`
			);
		}
		return { idleMB, ...results };
	} finally {
		await app.stop();
	}
}

async function main() {
	console.log(`export memory: ${FRAMES.toLocaleString('en-US')} frames at 1 Hz, IQ ${IQ_BINS}×${IQ_BINS} on every frame`);
	const week = await weekRun(FRAMES, IQ_BINS);
	const app = await exportsOn(week, {});
	// The same server with V8 left to size its heap itself, for comparison (serve.js explains the setting).
	const v8Own = await exportsOn(week, { PHASEWARDEN_V8_HEAP_GROWTH_PERCENT: '0' });
	const bareCsv = await bareRead(week.dataDir, week.runId, false);
	const bareNd = await bareRead(week.dataDir, week.runId, true);
	const rows: BenchRow[] = [
		{
			measure: 'server RSS, peak during export.csv vs idle',
			app: app.csv.peakMB,
			baseline: app.idleMB,
			unit: 'MB',
			target: { on: 'difference', atMost: 50, unit: 'MB' }
		},
		{
			measure: 'server RSS, peak during export.ndjson vs idle',
			app: app.ndjson.peakMB,
			baseline: app.idleMB,
			unit: 'MB',
			target: { on: 'difference', atMost: 50, unit: 'MB' }
		},
		...(['csv', 'ndjson'] as const).map((format): BenchRow => ({
			measure: `… export.${format} with V8's own heap growth`,
			app: v8Own[format].peakMB,
			baseline: v8Own.idleMB,
			unit: 'MB',
			target: { on: 'none' }
		})),
		{
			measure: 'export.csv throughput vs bare keyset read (no IQ)',
			app: FRAMES / app.csv.seconds,
			baseline: bareCsv.rows / bareCsv.seconds,
			unit: 'frames/s',
			target: { on: 'none' }
		},
		{
			measure: 'export.ndjson throughput vs bare keyset read (with IQ)',
			app: FRAMES / app.ndjson.seconds,
			baseline: bareNd.rows / bareNd.seconds,
			unit: 'frames/s',
			target: { on: 'none' }
		}
	];
	const failed = printTable('Export of a 7-day run at 1 Hz', rows, [
		`${FRAMES.toLocaleString('en-US')} frames; CSV ${(app.csv.bytes / 1e6).toFixed(0)} MB, NDJSON ${(app.ndjson.bytes / 1e6).toFixed(0)} MB`,
		`RSS sampled every ${SAMPLE_MS} ms from /proc/<pid>/status; idle read after ${SETTLE_S} s of rest following a warm-up export`,
		'bare read: the same keyset pages read by framePages from PGlite in the benchmark process, no formatting and no HTTP'
	]);
	process.exitCode = failed ? 1 : 0;
}

main().catch((err) => {
	console.error(err);
	process.exit(1);
});
