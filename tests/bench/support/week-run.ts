// A data folder holding one ended 7-day run at 1 Hz (604,800 frames) for the export benchmark. Built
// once by bulk INSERT … SELECT generate_series straight into PGlite (the agent path would take hours),
// its rollups rebuilt from the frames, then cached in the temp folder and copied for each server.
import { cpSync, existsSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { sql } from 'drizzle-orm';
import { openDatabase } from '../../../src/lib/server/db';
import { rebuildRollups } from '../../../src/lib/server/rollups/store';
import { findOrCreateRun } from '../../../src/lib/server/runs/service';
import { benchRun } from './frames';
import { migrationsDir, seedTemplate, tempDir, type Seeded } from './seed';

export const WEEK_T0_MS = 1_796_000_000_000;
const INSERT_ROWS = 50_000;

export interface WeekRun extends Seeded {
	runId: string;
	frames: number;
}

function iqJson(bins: number): string | null {
	if (bins === 0) return null;
	const counts = Array.from({ length: bins * bins }, (_, i) => (i * 37) % 101);
	return JSON.stringify({ bins, extent: 3, counts });
}

async function build(dir: string, frames: number, iqBins: number, log: (s: string) => void): Promise<WeekRun> {
	const template = await seedTemplate();
	cpSync(template.dataDir, dir, { recursive: true });
	const { db, close } = await openDatabase(dir, migrationsDir);
	try {
		const run = await findOrCreateRun(db, template.setupId, benchRun('week-1hz'), 'bench');
		const iq = iqJson(iqBins);
		for (let from = 1; from <= frames; from += INSERT_ROWS) {
			const to = Math.min(frames, from + INSERT_ROWS - 1);
			await db.execute(sql`
				INSERT INTO frames (run_id, seq, t, window_s, shots, vacuum, counts, lock, switches, dwell_s, escapes, vacuum_s, amp, aux, iq)
				SELECT ${run.id}, g, ${WEEK_T0_MS}::bigint + g * 1000, 1, 2000, 30 + g % 7,
					jsonb_build_array(330, 325, 327 + g % 3, 326, 322, 330), 0.93, 2 + g % 4, 0.98, g % 2, 0.02, 3.94,
					jsonb_build_object('mxc_mK', 12.1 + (g % 10) / 100.0, 'pump_dBm', -23, 'bias_uV', 18), ${iq}::jsonb
				FROM generate_series(${from}::integer, ${to}::integer) AS g`);
			log(`  frames ${to.toLocaleString('en-US')} / ${frames.toLocaleString('en-US')}`);
		}
		await db.execute(sql`UPDATE runs SET last_seq = ${frames}, frame_count = ${frames}, last_frame_t = ${WEEK_T0_MS + frames * 1000},
			last_frame_at = now(), status = 'ended', ended_at = now(), end_reason = 'benchmark' WHERE id = ${run.id}`);
		log('  rollups…');
		await rebuildRollups(db, run.id, () => null);
		// Statistics a long-lived folder would have: without them the planner expects a handful of
		// rows and answers each keyset page with a bitmap scan and sort of the rest of the run.
		await db.execute(sql`VACUUM ANALYZE frames`);
		await db.execute(sql`VACUUM ANALYZE frame_rollups`);
		return { ...template, dataDir: dir, runId: run.id, frames };
	} finally {
		await close();
	}
}

/** A private copy of the cached week-long run (built first when missing). */
export async function weekRun(frames: number, iqBins: number, log: (s: string) => void = console.log): Promise<WeekRun> {
	const migrations = readdirSync(migrationsDir).filter((f) => f.endsWith('.sql')).length;
	const cache = path.join(os.tmpdir(), `phasewarden-bench-week-${migrations}m-${frames}f-${iqBins}iq`);
	const marker = path.join(cache, 'bench-week.json');
	if (!existsSync(marker)) {
		rmSync(cache, { recursive: true, force: true });
		log(`building ${cache} (once)…`);
		const built = await build(cache, frames, iqBins, log);
		writeFileSync(marker, JSON.stringify(built));
	}
	const cached = JSON.parse(readFileSync(marker, 'utf8')) as WeekRun;
	const copy = tempDir('export-week');
	cpSync(cache, copy, { recursive: true });
	rmSync(path.join(copy, 'bench-week.json'));
	return { ...cached, dataDir: copy };
}
