// Planner statistics, which PostgreSQL's autovacuum would keep fresh and PGlite's single-user
// backend never does. Without them every table looks nearly empty to the planner: a page of a
// run's frames (`seq > n ORDER BY seq LIMIT 200`) was planned as a bitmap scan of the whole rest
// of the run plus a sort, 30 ms instead of 0.3 ms, on the event loop.
//
// Same trigger as autovacuum's analyze (common practice, PostgreSQL's defaults
// autovacuum_analyze_threshold = 50 and autovacuum_analyze_scale_factor = 0.1): a table is analyzed
// once its rows changed since the last ANALYZE exceed 50 + 10 % of its rows, so a growing frames
// table is sampled ever more rarely, never on every pass.
import { sql } from 'drizzle-orm';
import type { Db } from '../db';

const THRESHOLD_ROWS = 50;
const SCALE_FACTOR = 0.1;

/** Analyzes the app's tables that changed enough since their last ANALYZE; returns their names. */
export async function analyzeChangedTables(db: Db): Promise<string[]> {
	const { rows } = await db.execute<{ relname: string }>(sql`
		SELECT relname FROM pg_stat_user_tables
		WHERE schemaname = 'public'
			AND (last_analyze IS NULL AND n_live_tup + n_mod_since_analyze > 0
				OR n_mod_since_analyze > ${THRESHOLD_ROWS}::float8 + ${SCALE_FACTOR}::float8 * n_live_tup)
		ORDER BY relname`);
	const analyzed: string[] = [];
	for (const { relname } of rows) {
		// Names come from the catalog, quoted as identifiers all the same.
		await db.execute(sql`ANALYZE ${sql.identifier(relname)}`);
		analyzed.push(relname);
		await new Promise((r) => setImmediate(r));
	}
	return analyzed;
}
