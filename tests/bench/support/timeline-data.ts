// A data folder with a 7-day and a 1-hour run at one frame per second, for the timeline
// benchmark. Frames and rollups go in through the ingest's own statement (writeBatch, rollups
// merged by the rollup store), a few hundred frames per statement. Built once and kept in the
// system's temp folder (delete it to rebuild): the week takes minutes to write.
import { cpSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { rollupFrames } from '../../../src/lib/rollup/rollup';
import { openDatabase } from '../../../src/lib/server/db';
import { frameGaps } from '../../../src/lib/server/db/schema';
import { writeBatch } from '../../../src/lib/server/ingest/batch-write';
import { mergeWithStored, RollupCache } from '../../../src/lib/server/rollups/store';
import { endRun, findOrCreateRun } from '../../../src/lib/server/runs/service';
import { benchFrame, benchRun } from './frames';
import { migrationsDir, seedTemplate } from './seed';

export const WEEK_FRAMES = 7 * 24 * 3600;
export const HOUR_FRAMES = 3600;
/** 600 windows: at 1 Hz they touch ~73 rollup rows, below the statement's limit of 100. */
const FRAMES_PER_STATEMENT = 600;
const CACHE = path.join(os.tmpdir(), 'phasewarden-bench-timeline-v1');
const T0_MS = 1_798_761_600_000; // 2027-01-01T00:00Z

export type TimelineData = { dataDir: string; setupId: string; weekRunId: string; hourRunId: string };

async function fillRun(
	db: Awaited<ReturnType<typeof openDatabase>>['db'],
	runId: string,
	frames: number,
	lostSeqs: [number, number] | null
) {
	const cache = new RollupCache();
	let stored = 0;
	for (let first = 1; first <= frames; first += FRAMES_PER_STATEMENT) {
		const batch = [];
		for (let seq = first; seq < first + FRAMES_PER_STATEMENT && seq <= frames; seq++) {
			if (lostSeqs && seq >= lostSeqs[0] && seq <= lostSeqs[1]) continue;
			batch.push(benchFrame(seq, T0_MS + seq * 1000));
		}
		if (batch.length === 0) continue;
		const merged = await mergeWithStored(
			db,
			runId,
			rollupFrames(batch, () => null),
			cache
		);
		const last = batch[batch.length - 1];
		await writeBatch(
			db,
			runId,
			new Date(),
			batch.map((frame) => ({ frame, late: false })),
			merged,
			{
				lastSeq: last.seq,
				lastFrameT: last.t,
				lastFrameAt: new Date(),
				lastLock: last.lock,
				frameCount: (stored += batch.length),
				gapCount: lostSeqs ? 1 : 0
			}
		);
		for (const r of merged) cache.remember(r);
		if (first % 60_000 === 1) process.stderr.write(`  ${runId.slice(0, 8)}: ${last.seq} / ${frames} frames\r`);
	}
	if (lostSeqs) await db.insert(frameGaps).values({ runId, fromSeq: lostSeqs[0], toSeq: lostSeqs[1] });
	// Ended, so a server opened on the folder has no live run to restore and replay.
	await endRun(db, runId, 'benchmark data');
}

export async function timelineData(): Promise<TimelineData> {
	const meta = path.join(CACHE, 'meta.json');
	if (existsSync(meta)) return JSON.parse(readFileSync(meta, 'utf8')) as TimelineData;
	rmSync(CACHE, { recursive: true, force: true });
	mkdirSync(CACHE, { recursive: true });
	const template = await seedTemplate();
	const dataDir = path.join(CACHE, 'data');
	cpSync(template.dataDir, dataDir, { recursive: true });
	const { db, close } = await openDatabase(dataDir, migrationsDir);
	try {
		const started = Date.now();
		const week = await findOrCreateRun(db, template.setupId, benchRun('week'), 'bench');
		const hour = await findOrCreateRun(db, template.setupId, benchRun('hour'), 'bench');
		// An hour lost in the middle of the week, so the timeline has lost data to show.
		await fillRun(db, week.id, WEEK_FRAMES, [300_000, 303_600]);
		await fillRun(db, hour.id, HOUR_FRAMES, null);
		process.stderr.write(`\n  wrote the runs in ${((Date.now() - started) / 1000).toFixed(0)} s\n`);
		const data: TimelineData = { dataDir, setupId: template.setupId, weekRunId: week.id, hourRunId: hour.id };
		writeFileSync(meta, JSON.stringify(data));
		return data;
	} finally {
		await close();
	}
}
