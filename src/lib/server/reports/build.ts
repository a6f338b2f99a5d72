// Builds a morning report: the runs of some setups that recorded data in [since_ms, until_ms)
// (agent clock), each with its summary and a small chart, plus the incidents and annotations.
// Reads rollups only (the summary service's rule).
import { and, asc, eq, gte, inArray, lt } from 'drizzle-orm';
import { ROLLUP_RESOLUTIONS_S } from '../../rollup/rollup';
import { timelinePath, type MorningReport, type ReportAnnotation, type ReportRun, type SparkPoint } from '../../reports/report';
import type { SummaryAnnotation } from '../../summary/summary';
import type { Db } from '../db';
import { frameRollups, runs, setups } from '../db/schema';
import { readRollups } from '../rollups/store';
import { runSummary, summaryAnnotations } from '../summary/service';

/** Where annotations come from; by default the run's own notes (annotations/service.ts). */
export type AnnotationSource = (runId: string, from_ms: number, to_ms: number) => Promise<SummaryAnnotation[]>;

export type ReportRequest = {
	setupIds: string[];
	since_ms: number;
	until_ms: number;
	timeZone: string;
	now_ms: number;
	person?: MorningReport['person'];
	annotations?: AnnotationSource;
};

const SPARK_POINTS = 48;
const COARSEST_S = Math.max(...ROLLUP_RESOLUTIONS_S);

/** Runs of the setups with rollups in the span (looked up on the coarsest buckets). */
async function runsInSpan(db: Db, setupIds: string[], since_ms: number, until_ms: number) {
	if (setupIds.length === 0) return [];
	const ids = await db
		.selectDistinct({ runId: frameRollups.runId })
		.from(frameRollups)
		.innerJoin(runs, eq(runs.id, frameRollups.runId))
		.where(
			and(
				inArray(runs.setupId, setupIds),
				eq(frameRollups.resolutionS, COARSEST_S),
				gte(frameRollups.bucketT, since_ms - COARSEST_S * 1000 + 1),
				lt(frameRollups.bucketT, until_ms)
			)
		);
	if (ids.length === 0) return [];
	return db
		.select({ run: runs, setupName: setups.name })
		.from(runs)
		.innerJoin(setups, eq(setups.id, runs.setupId))
		.where(
			inArray(
				runs.id,
				ids.map((r) => r.runId)
			)
		)
		.orderBy(asc(setups.name), asc(runs.startedAt));
}

async function spark(db: Db, runId: string, since_ms: number, until_ms: number): Promise<ReportRun['spark']> {
	const wanted_s = (until_ms - since_ms) / 1000 / SPARK_POINTS;
	const resolution_s = ROLLUP_RESOLUTIONS_S.find((r) => r >= wanted_s) ?? COARSEST_S;
	const rows = await readRollups(db, runId, resolution_s, since_ms, until_ms - 1, 400);
	const points: SparkPoint[] = rows.map((r) => ({
		t_ms: r.bucket_t,
		switchRate_per_s: r.dwell_s > 0 ? r.switches / r.dwell_s : null,
		expectedRate_per_s: r.dwell_s > 0 && r.expectedSwitches !== null ? r.expectedSwitches / r.dwell_s : null,
		lockMean: r.frames > 0 ? r.lockSum / r.frames : null
	}));
	return { resolution_s, points };
}

export async function buildMorningReport(db: Db, req: ReportRequest): Promise<MorningReport> {
	if (!(req.until_ms > req.since_ms)) throw new RangeError(`report: until_ms (${req.until_ms}) must be after since_ms (${req.since_ms})`);
	const setupRows = req.setupIds.length
		? await db.select({ id: setups.id, name: setups.name }).from(setups).where(inArray(setups.id, req.setupIds)).orderBy(asc(setups.name))
		: [];
	const found = await runsInSpan(db, req.setupIds, req.since_ms, req.until_ms);
	const reportRuns: ReportRun[] = [];
	const annotations: ReportAnnotation[] = [];
	for (const { run, setupName } of found) {
		const notes = await (req.annotations ?? ((id, from, to) => summaryAnnotations(db, id, from, to)))(run.id, req.since_ms, req.until_ms);
		const summary = await runSummary(db, run, { from_ms: req.since_ms, to_ms: req.until_ms, annotations: notes });
		reportRuns.push({
			id: run.id,
			name: run.name,
			setupId: run.setupId,
			setupName,
			status: run.status,
			summary,
			spark: await spark(db, run.id, req.since_ms, req.until_ms),
			timelinePath: timelinePath(run.id, req.since_ms, req.until_ms)
		});
		annotations.push(...summary.annotations.map((a) => ({ ...a, runId: run.id, runName: run.name })));
	}
	const incidents = reportRuns
		.flatMap((r) => r.summary.incidents.map((i) => ({ ...i, runName: r.name, setupName: r.setupName })))
		.sort((a, b) => a.opened_ms - b.opened_ms);
	return {
		version: 1,
		since_ms: req.since_ms,
		until_ms: req.until_ms,
		timeZone: req.timeZone,
		generatedAt_ms: req.now_ms,
		person: req.person ?? null,
		setups: setupRows,
		runs: reportRuns,
		incidents,
		annotations: annotations.sort((a, b) => a.at_ms - b.at_ms)
	};
}
