// The run summary of a run or a span of it: gathers the covering rollups, the frames of the few
// buckets whose lock straddles the threshold, the gaps and the incidents, then hands them to the
// pure summary (src/lib/summary). Shared by GET /api/runs/:id/summary, the summary page and the
// morning report.
import { isSymmetric } from '../../detect/occupancy-imbalance';
import type { ParsedRunInfo } from '../../detect/run-info';
import { ROLLUP_RESOLUTIONS_S } from '../../rollup/rollup';
import { coverSpan } from '../../summary/span-cover';
import { summarize, type RunSummary, type SummaryAnnotation } from '../../summary/summary';
import { listAnnotations } from '../annotations/service';
import type { Db } from '../db';
import { getSetupRules } from '../rules/service';
import { getRun, type RunRow } from '../runs/service';
import { gapsWithNeighbours } from './gaps';
import { incidentsInSpan } from './incidents';
import { lockedFromFrames } from './locked-frames';
import { readCover, runDataExtent } from './span-rollups';

export type SummaryRequest = { from_ms?: number; to_ms?: number; annotations?: readonly SummaryAnnotation[] };

export class SummaryError extends Error {
	constructor(
		readonly status: 400 | 404,
		message: string
	) {
		super(message);
	}
}

/**
 * The summary of [from_ms, to_ms) of the run (agent clock); either end left out means the run's
 * first or last data. A run without data, with no span given, yields an empty summary of its start.
 */
export async function runSummary(db: Db, runOrId: string | RunRow, req: SummaryRequest = {}): Promise<RunSummary> {
	const run = typeof runOrId === 'string' ? await getRun(db, runOrId) : runOrId;
	if (!run) throw new SummaryError(404, 'no run with this id');
	const extent = req.from_ms === undefined || req.to_ms === undefined ? await runDataExtent(db, run.id) : null;
	const fallback = run.startedAt.getTime();
	const from_ms = req.from_ms ?? extent?.from_ms ?? fallback;
	const to_ms = req.to_ms ?? extent?.to_ms ?? Math.max(from_ms + 1, fallback + 1);
	if (to_ms <= from_ms) throw new SummaryError(400, `to_ms (${to_ms}) must be after from_ms (${from_ms})`);
	const cover = coverSpan(from_ms, to_ms, ROLLUP_RESOLUTIONS_S);
	const rules = await getSetupRules(db, run.setupId);
	const threshold = rules.lock_lost.threshold;
	const [buckets, gaps, incidents, annotations] = await Promise.all([
		readCover(db, run.id, cover),
		gapsWithNeighbours(db, run.id),
		incidentsInSpan(db, [run.id], cover.from_ms, cover.to_ms),
		req.annotations ?? summaryAnnotations(db, run.id, from_ms, to_ms)
	]);
	const locked = await lockedFromFrames(db, run.id, buckets, threshold);
	const detuning = typeof run.operatingPoint?.detuning === 'number' ? run.operatingPoint.detuning : undefined;
	return summarize({
		runId: run.id,
		states: run.states,
		span: { from_ms, to_ms },
		covered: { from_ms: cover.from_ms, to_ms: cover.to_ms },
		buckets,
		lockedFromFrames: locked,
		lockThreshold: threshold,
		expectedPairs: rules.occupancy_imbalance.expectedPairs,
		symmetric: isSymmetric(rules.occupancy_imbalance, {
			operatingPoint: detuning === undefined ? undefined : { detuning }
		} as ParsedRunInfo),
		gaps,
		incidents,
		annotations
	});
}

/** The run's notes that touch the span, as the summary shows them. */
export async function summaryAnnotations(db: Db, runId: string, from_ms: number, to_ms: number): Promise<SummaryAnnotation[]> {
	const notes = await listAnnotations(db, runId, from_ms, to_ms);
	return notes.map((a) => ({ id: a.id, at_ms: a.at_ms, until_ms: a.until_ms, text: a.text, author: a.authorName }));
}
