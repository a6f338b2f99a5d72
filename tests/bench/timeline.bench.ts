// The run timeline at N = 1000 for the full span of a 7-day run at 1 Hz (604,800 frames) against
// the same for a 1-hour run, timed interleaved in the same process; then, with a built server, the
// timeline page drawn by chromium for both. Target: the week within 2× of the hour.
// Run: npm run bench:timeline (builds first). Not part of the test suite: nothing is asserted.
import { performance } from 'node:perf_hooks';
import { openDatabase } from '../../src/lib/server/db';
import { getRun } from '../../src/lib/server/runs/service';
import { runTimeline } from '../../src/lib/server/timeline/service';
import { launchChromium } from '../browser/chromium';
import { sizeFromEnv } from './support/env';
import { migrationsDir } from './support/seed';
import { signIn, startAppServer } from './support/server';
import { median } from './support/stats';
import { printTable, type BenchRow } from './support/table';
import { timelineData } from './support/timeline-data';

const TRIALS = sizeFromEnv('BENCH_TRIALS', 15);
const PAGE_TRIALS = sizeFromEnv('BENCH_PAGE_TRIALS', 8);
const POINTS = 1000;

type Pair = { week: number[]; hour: number[]; ratios: number[] };

/** Runs both measures alternately (which goes first alternates too); one warm-up each. */
async function interleaved(week: () => Promise<unknown>, hour: () => Promise<unknown>, trials: number): Promise<Pair> {
	await week();
	await hour();
	const out: Pair = { week: [], hour: [], ratios: [] };
	const time = async (f: () => Promise<unknown>) => {
		const t0 = performance.now();
		await f();
		return performance.now() - t0;
	};
	for (let i = 0; i < trials; i++) {
		let w: number;
		let h: number;
		if (i % 2 === 0) {
			h = await time(hour);
			w = await time(week);
		} else {
			w = await time(week);
			h = await time(hour);
		}
		out.week.push(w);
		out.hour.push(h);
		out.ratios.push(w / h);
	}
	return out;
}

const data = await timelineData();
const rows: BenchRow[] = [];
const notes: string[] = [];

{
	const { db, close } = await openDatabase(data.dataDir, migrationsDir);
	const week = (await getRun(db, data.weekRunId))!;
	const hour = (await getRun(db, data.hourRunId))!;
	const w = await runTimeline(db, week, { points: POINTS });
	const h = await runTimeline(db, hour, { points: POINTS });
	notes.push(
		`week: ${week.frameCount.toLocaleString('en-US')} frames → ${w.buckets.length} buckets of ${w.resolution_s} s from ${w.rollup_s} s rollups; ` +
			`hour: ${hour.frameCount.toLocaleString('en-US')} frames → ${h.buckets.length} buckets of ${h.resolution_s} s from ${h.rollup_s === null ? 'the frames' : `${h.rollup_s} s rollups`}`
	);
	const pair = await interleaved(
		() => runTimeline(db, week, { points: POINTS }),
		() => runTimeline(db, hour, { points: POINTS }),
		TRIALS
	);
	rows.push({
		measure: `timeline service, full span, N=${POINTS}: 7-day run (app) vs 1-hour run (baseline), median of ${TRIALS}`,
		app: median(pair.week),
		baseline: median(pair.hour),
		unit: 'ms',
		ratio: median(pair.ratios),
		target: { on: 'ratio', atMost: 2 }
	});
	await close();
}

if (process.env.BENCH_SKIP_PAGE !== '1') {
	const server = await startAppServer(data.dataDir);
	const browser = await launchChromium();
	try {
		const { cookie } = await signIn(server);
		const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
		const url = new URL(server.url);
		await context.addCookies(
			cookie.split('; ').map((c) => {
				const [name, ...v] = c.split('=');
				return { name, value: v.join('='), domain: url.hostname, path: '/' };
			})
		);
		const page = await context.newPage();
		// From navigation to the tracks drawn and the page hydrated (the brush answers keys), two frames painted.
		const draw = (runId: string) => async () => {
			await page.goto(`${server.url}/runs/${runId}/timeline`, { waitUntil: 'load' });
			await page.waitForSelector('.track-area section svg path', { state: 'attached' });
			await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
		};
		const pair = await interleaved(draw(data.weekRunId), draw(data.hourRunId), PAGE_TRIALS);
		rows.push({
			measure: `timeline page drawn in chromium: 7-day run (app) vs 1-hour run (baseline), median of ${PAGE_TRIALS}`,
			app: median(pair.week),
			baseline: median(pair.hour),
			unit: 'ms',
			ratio: median(pair.ratios),
			target: { on: 'ratio', atMost: 2 }
		});
		const svgNodes = async (runId: string) => {
			await draw(runId)();
			return page.evaluate(() => document.querySelectorAll('.track-area svg *').length);
		};
		notes.push(`SVG elements drawn: week ${await svgNodes(data.weekRunId)}, hour ${await svgNodes(data.hourRunId)}`);
	} finally {
		await browser.close();
		await server.stop();
	}
}

const failed = printTable('Run timeline: a week against an hour', rows, notes);
process.exitCode = failed ? 1 : 0;
