// Housekeeping the embedded database cannot do for itself: PGlite runs PostgreSQL as one
// single-user backend, so autovacuum and the checkpointer never run. Without VACUUM, every
// updated row (runs, rollups, snapshots) leaves a dead copy behind and the folder grows without
// bound; without CHECKPOINT, the write-ahead log grows until its size limit forces one; without
// ANALYZE, the planner has no statistics (analyze.ts).
import { sql } from 'drizzle-orm';
import type { DatabaseKind, Db } from '../db';
import { analyzeChangedTables } from './analyze';
import { applyRetention } from './retention';

/** Tables rewritten in place by ingest: small, so vacuuming them is cheap and frequent. */
const UPDATED_TABLES = ['runs', 'run_snapshots', 'frame_rollups', 'frame_gaps', 'incidents'] as const;

export interface MaintenanceReport {
	framesDeleted: number;
	vacuumed: string[];
	analyzed: string[];
}

export async function runMaintenance(db: Db, now = new Date(), kind: DatabaseKind = 'embedded'): Promise<MaintenanceReport> {
	const framesDeleted = await applyRetention(db, now);
	// A PostgreSQL server vacuums, analyzes and checkpoints by itself (and CHECKPOINT needs a superuser there).
	if (kind === 'server') return { framesDeleted, vacuumed: [], analyzed: [] };
	const vacuumed: string[] = [...UPDATED_TABLES];
	// Insert-only until retention deletes from it; then its freed space is made reusable.
	if (framesDeleted > 0) vacuumed.push('frames');
	for (const table of vacuumed) {
		await db.execute(sql.raw(`VACUUM ${table}`));
		await new Promise((r) => setImmediate(r));
	}
	const analyzed = await analyzeChangedTables(db);
	await db.execute(sql`CHECKPOINT`);
	return { framesDeleted, vacuumed, analyzed };
}

/** How often the planner statistics are checked (analyze.ts), apart from the full pass. */
const ANALYZE_CHECK_MS = 20_000;

/** Runs maintenance every `everyMs`, one pass at a time; returns a stop function. */
export function scheduleMaintenance(
	db: Db,
	everyMs: number,
	kind: DatabaseKind = 'embedded',
	log: (message: string) => void = console.log,
	isLeader: () => boolean = () => true
): () => void {
	let running = false;
	const timer = setInterval(async () => {
		// With several instances, retention runs on the leader only.
		if (running || !isLeader()) return;
		running = true;
		try {
			const report = await runMaintenance(db, new Date(), kind);
			if (report.framesDeleted) log(`maintenance: ${report.framesDeleted} raw frames past retention deleted`);
		} catch (err) {
			console.error('maintenance failed', err);
		} finally {
			running = false;
		}
	}, everyMs);
	// Statistics go stale as fast as runs grow (a replay right after a large upload must not wait a
	// whole maintenance period), and checking costs one catalog query.
	let analyzing = false;
	const analyzeTimer = setInterval(
		async () => {
			if (analyzing || running || kind === 'server') return;
			analyzing = true;
			try {
				await analyzeChangedTables(db);
			} catch (err) {
				console.error('analyze failed', err);
			} finally {
				analyzing = false;
			}
		},
		Math.min(everyMs, ANALYZE_CHECK_MS)
	);
	timer.unref();
	analyzeTimer.unref();
	return () => {
		clearInterval(timer);
		clearInterval(analyzeTimer);
	};
}
