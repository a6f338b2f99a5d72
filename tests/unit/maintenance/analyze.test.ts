// Planner statistics for the embedded database, which has no autovacuum to gather them: after a
// run's frames are stored, the analyze pass samples the table, and a page of frames is then read
// through the primary key's index instead of a scan of the rest of the run plus a sort.
// Trigger: PostgreSQL's autovacuum defaults, analyze threshold 50 rows + scale factor 0.1
// (PostgreSQL documentation, "The Autovacuum Daemon"; common practice).
import { randomUUID } from 'node:crypto';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, expect, it, vi } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { frames, runs, setups } from '../../../src/lib/server/db/schema';
import { frameToRow } from '../../../src/lib/server/ingest/frame-rows';
import { analyzeChangedTables } from '../../../src/lib/server/maintenance/analyze';

vi.setConfig({ testTimeout: 120_000 });

let db: Db;
let close: () => Promise<void>;
beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
}, 120_000);
afterAll(async () => {
	await close();
});

const pagePlan = async (runId: string) => {
	const { rows } = await db.execute<{ 'QUERY PLAN': string }>(
		sql`EXPLAIN SELECT * FROM frames WHERE run_id = ${runId} AND seq > 100 AND late = false ORDER BY seq LIMIT 200`
	);
	return rows.map((r) => r['QUERY PLAN']).join('\n');
};

it('analyzes the frames table once enough rows changed, and the frame page then uses the index', async () => {
	const setupId = randomUUID();
	await db.insert(setups).values({ id: setupId, name: 'analyze fridge', order: 2, states: 2, modeGHz: 5, nominalMK: 12 });
	const runId = randomUUID();
	await db.insert(runs).values({ id: runId, setupId, key: 'k', name: 'n', order: 2, states: 2, modeGHz: 5 });
	for (let b = 0; b < 10; b++) {
		const rows = Array.from({ length: 1000 }, (_, i) => {
			const seq = b * 1000 + i + 1;
			return frameToRow(runId, {
				seq,
				t: seq * 1000,
				window_s: 1,
				shots: 10,
				vacuum: 0,
				counts: [5, 5],
				lock: 0.9,
				switches: 0,
				dwell_s: 1,
				escapes: 0,
				vacuum_s: 0
			});
		});
		await db.insert(frames).values(rows);
	}
	// Without statistics the planner takes the table for nearly empty.
	expect(await pagePlan(runId)).not.toMatch(/^Limit[\s\S]*Index Scan using frames_run_id_seq_pk/);

	const analyzed = await analyzeChangedTables(db);
	expect(analyzed).toContain('frames');
	expect(await pagePlan(runId)).toMatch(/^Limit[\s\S]*Index Scan using frames_run_id_seq_pk/);

	// Nothing changed since: the next pass analyzes nothing again (a large table is not resampled every pass).
	expect(await analyzeChangedTables(db)).not.toContain('frames');
});
