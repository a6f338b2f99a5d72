// npm run rollups:rebuild -- --run ID | --all [--force]
// Recomputes frame rollups from the stored frames in the data directory (PHASEWARDEN_DATA); the
// server must be stopped. Predictions use each setup's CURRENT rate models, not the ones in force
// when the frames arrived. Runs whose raw frames retention already deleted are skipped unless
// --force, since a rebuild would drop those frames from the rollups for good.
import { asc } from 'drizzle-orm';
import { readConfig } from '../lib/server/config';
import { lockDataDir, unlockDataDir } from '../lib/server/data-lock';
import { openConfiguredDatabase } from '../lib/server/db';
import { runs } from '../lib/server/db/schema';
import { parseRebuildArgs, REBUILD_USAGE, type RebuildArgs } from '../lib/server/rollups/rebuild-args';
import { rebuildRollups, storedFrameShortfall } from '../lib/server/rollups/store';
import { getRun } from '../lib/server/runs/service';

let args: RebuildArgs;
try {
	args = parseRebuildArgs(process.argv.slice(2));
} catch (err) {
	console.error(`rollups:rebuild: ${(err as Error).message}`);
	console.error(REBUILD_USAGE);
	process.exit(2);
}

const config = readConfig();
// The embedded database is one process's; a PostgreSQL server takes any number of clients.
const embedded = !config.databaseUrl;
try {
	if (embedded) lockDataDir(config.dataDir);
} catch (err) {
	console.error(`rollups:rebuild: ${(err as Error).message}`);
	process.exit(1);
}
const { db, close } = await openConfiguredDatabase(config);
try {
	let targets: { id: string; name: string }[];
	if ('runId' in args.target) {
		const run = await getRun(db, args.target.runId);
		if (!run) throw new Error(`no run with id ${args.target.runId} in ${config.dataDir}`);
		targets = [run];
	} else {
		targets = await db.select({ id: runs.id, name: runs.name }).from(runs).orderBy(asc(runs.startedAt));
		if (targets.length === 0) console.log(`no runs in ${config.dataDir}`);
	}
	for (const run of targets) {
		const missing = await storedFrameShortfall(db, run.id);
		if (missing > 0 && !args.force) {
			console.error(
				`skipped ${run.name} (${run.id}): ${missing} of its frames were deleted by raw retention, so a rebuild would drop them from the rollups; --force rebuilds anyway`
			);
			process.exitCode = 1;
			continue;
		}
		const result = await rebuildRollups(db, run.id, undefined, (p) => {
			console.log(`${run.name} (${run.id}): ${p.framesDone} / ${p.framesTotal} frames`);
		});
		console.log(`${run.name} (${run.id}): done, ${result.frames} frames in ${result.rows} rollup rows`);
	}
} catch (err) {
	console.error(`rollups:rebuild: ${(err as Error).message}`);
	process.exitCode = 1;
} finally {
	await close();
	if (embedded) unlockDataDir(config.dataDir);
}
