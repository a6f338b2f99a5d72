// Whether each detector of a run can see (detect/status.ts), for the run page and its API: from
// the live writer's engine when one holds the run, else from the run's stored detector snapshot.
import { desc, eq } from 'drizzle-orm';
import { DetectorEngine } from '../../detect/engine';
import type { DetectorStatus, StatusOptions } from '../../detect/status';
import type { Db } from '../db';
import { frames, runSnapshots } from '../db/schema';
import type { Ingest } from '../ingest/ingest';
import { restoreEngine } from '../ingest/snapshots';
import { getSetupRules } from '../rules/service';
import { runInfoFor } from './detector-context';
import type { RunRow } from './service';

/** The aux values of the run's newest frame: whether frames carry a temperature, and which limits can see. */
async function latestFrameAux(db: Db, runId: string): Promise<StatusOptions['lastFrame']> {
	const [row] = await db.select({ aux: frames.aux }).from(frames).where(eq(frames.runId, runId)).orderBy(desc(frames.seq)).limit(1);
	return row ? { aux: row.aux ?? undefined } : null;
}

/**
 * An engine for a run no writer holds. An ended run's snapshot is read as saved (every detector
 * reports the end anyway). An open run is brought up to date the way a writer would open it: the
 * frames stored after the snapshot replayed, then the setup's current rules and rate models
 * applied, so a model saved while no agent was connected shows at once. Nothing is written.
 */
async function storedEngine(db: Db, run: RunRow): Promise<DetectorEngine> {
	const [rules, info] = await Promise.all([getSetupRules(db, run.setupId), runInfoFor(db, run)]);
	if (run.status === 'ended') {
		const [saved] = await db.select({ state: runSnapshots.state }).from(runSnapshots).where(eq(runSnapshots.runId, run.id));
		try {
			if (saved) return DetectorEngine.restore(saved.state);
		} catch {
			// A snapshot from another version of the detectors: the end of the run is all there is to report.
		}
		return new DetectorEngine(rules, info);
	}
	const { engine } = await restoreEngine(db, run.id, rules, info);
	const { runId: _r, states: _s, order: _o, mode_GHz: _m, openedAt_ms: _t, ...facts } = info;
	engine.setRules(rules, Date.now());
	engine.setRun(facts, Date.now());
	return engine;
}

/** Null when it cannot be worked out (logged): the run page then says so, and the rest of the run still loads. */
export async function runDetectorStatus(
	db: Db,
	ingest: Pick<Ingest, 'engineStatus'> | null,
	run: RunRow
): Promise<DetectorStatus[] | null> {
	try {
		const lastFrame = await latestFrameAux(db, run.id);
		const live = ingest?.engineStatus(run.id, { lastFrame }) ?? null;
		if (live) return live;
		const engine = await storedEngine(db, run);
		return engine.status({ lastFrame, runEnded: run.status === 'ended' });
	} catch (err) {
		console.error(`run ${run.id}: detector status unavailable`, err);
		return null;
	}
}
