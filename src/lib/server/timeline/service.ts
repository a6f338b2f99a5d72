// A run's timeline for a span at N buckets: stored rollups merged on the bucket grid, or for
// short spans the frames themselves, read by the seq range the 10 s rollups give (the frames
// table is keyed by seq, not t, so a t-range scan would read the whole run).
import { and, asc, eq, getTableColumns, gte, lt, lte, max, min, sum } from 'drizzle-orm';
import { modelUncertainty } from '../../detect/model-band';
import { compileRates, expectFrame, TEMPERATURE_AUX } from '../../detect/expected';
import { parseRunInfo } from '../../detect/run-info';
import { bucketStart, ROLLUP_RESOLUTIONS_S, rollupFrames, type ExpectedOf } from '../../rollup/rollup';
import { bucketsFromRollups, type TimelineBucket } from '../../timeline/buckets';
import { expectedBand } from '../../timeline/model-band';
import type { RunTimeline } from '../../timeline/run-timeline';
import { checkPoints, gridFor, planTimeline, TIMELINE_POINTS_DEFAULT, type TimelinePlan } from '../../timeline/plan';
import type { Db } from '../db';
import { frameRollups, frames } from '../db/schema';
import { rowToFrame } from '../ingest/frame-rows';
import { readRollups } from '../rollups/store';
import { runInfoFor } from '../runs/detector-context';
import type { RunRow } from '../runs/service';

export type { RunTimeline };

/** Most frames a timeline reads; beyond, it falls back to 10 s rollups (coarser but still honest). */
export const TIMELINE_FRAMES_MAX = 20_000;
const FINEST_ROLLUP_S = ROLLUP_RESOLUTIONS_S[0];

export type TimelineQuery = { from_ms?: number; to_ms?: number; points?: number };

/** Agent-clock span of the run's stored data: first 10 s bucket to just after the last frame. */
export async function runSpan(db: Db, run: RunRow): Promise<{ from_ms: number; to_ms: number } | null> {
	const [row] = await db
		.select({ first: min(frameRollups.bucketT) })
		.from(frameRollups)
		.where(and(eq(frameRollups.runId, run.id), eq(frameRollups.resolutionS, FINEST_ROLLUP_S)));
	if (row?.first === null || row?.first === undefined || run.lastFrameT === null) return null;
	return { from_ms: Number(row.first), to_ms: Math.max(Number(row.first) + 1, run.lastFrameT + 1) };
}

/** Frames per second of the run and the seq range holding [from_ms, to_ms), from the 10 s rollups (one row, no JSON). */
async function seqIndex(db: Db, runId: string, from_ms: number, to_ms: number) {
	const [row] = await db
		.select({ frames: sum(frameRollups.frames), fromSeq: min(frameRollups.firstSeq), toSeq: max(frameRollups.lastSeq) })
		.from(frameRollups)
		.where(
			and(
				eq(frameRollups.runId, runId),
				eq(frameRollups.resolutionS, FINEST_ROLLUP_S),
				gte(frameRollups.bucketT, from_ms),
				lt(frameRollups.bucketT, to_ms)
			)
		);
	if (!row || row.fromSeq === null || row.toSeq === null) return null;
	return { frames: Number(row.frames), fromSeq: row.fromSeq, toSeq: row.toSeq };
}

// Only what a bucket sums: no IQ histogram, transitions or amplitude (most of a row's bytes).
const { iq: _iq, transitions: _tr, amp: _amp, receivedAt: _at, late: _late, runId: _run, ...summedColumns } = getTableColumns(frames);

async function framesBuckets(db: Db, run: RunRow, plan: TimelinePlan, expectedOf: ExpectedOf): Promise<TimelineBucket[] | null> {
	// Frame buckets need not lie on the 10 s grid: the 10 s bucket under way at from_ms may hold
	// frames inside the span, so the index starts at its start and the t filter trims the rest.
	const index = await seqIndex(db, run.id, bucketStart(plan.from_ms, FINEST_ROLLUP_S), plan.to_ms);
	if (!index) return bucketsFromRollups([], plan, run.states);
	if (index.frames > TIMELINE_FRAMES_MAX) return null;
	const rows = await db
		.select(summedColumns)
		.from(frames)
		.where(
			and(
				eq(frames.runId, run.id),
				gte(frames.seq, index.fromSeq),
				lte(frames.seq, index.toSeq),
				gte(frames.t, plan.from_ms),
				lt(frames.t, plan.to_ms)
			)
		)
		.orderBy(asc(frames.seq))
		.limit(TIMELINE_FRAMES_MAX + 1);
	const read = rows.map((r) => rowToFrame({ ...r, iq: null, transitions: null, amp: null }));
	return bucketsFromRollups(rollupFrames(read, expectedOf, [plan.width_s]), plan, run.states);
}

/** The same grid at the finest rollups, for a frame read that would be too large. */
function finestRollupPlan(plan: TimelinePlan, points: number): TimelinePlan {
	for (let k = 1; ; k++) {
		const grid = gridFor(plan.from_ms, plan.to_ms, k * FINEST_ROLLUP_S);
		if (grid.count <= points) return { source: 'rollups', rollup_s: FINEST_ROLLUP_S, width_s: k * FINEST_ROLLUP_S, ...grid };
	}
}

/**
 * Predicted counts of frames read directly, from the setup's current rate models (as a rollup
 * rebuild would; the stored rollups summed the model in force when each frame arrived).
 */
function expectedOfFrames(info: ReturnType<typeof parseRunInfo>): ExpectedOf {
	const rates = compileRates(info);
	if (!rates.switching && !rates.escape) return () => null;
	return (frame) => {
		const e = expectFrame(frame, rates);
		return { switches: e.switching?.expected ?? null, escapes: e.escape?.expected ?? null };
	};
}

export async function runTimeline(db: Db, run: RunRow, q: TimelineQuery = {}): Promise<RunTimeline> {
	const points = q.points ?? TIMELINE_POINTS_DEFAULT;
	const whole = q.from_ms === undefined || q.to_ms === undefined ? await runSpan(db, run) : null;
	const from_ms = q.from_ms ?? whole?.from_ms;
	const to_ms = q.to_ms ?? whole?.to_ms;
	if (from_ms === undefined || to_ms === undefined || to_ms <= from_ms) {
		// No frames yet (or a span starting after the last frame): nothing to cover, N still checked.
		checkPoints(points);
		return { resolution_s: FINEST_ROLLUP_S, rollup_s: FINEST_ROLLUP_S, buckets: [], span: null };
	}
	let plan = planTimeline(from_ms, to_ms, points);
	const info = parseRunInfo(await runInfoFor(db, run));
	let buckets: TimelineBucket[] | null = null;
	if (plan.source === 'frames') {
		buckets = await framesBuckets(db, run, plan, expectedOfFrames(info));
		if (!buckets) plan = finestRollupPlan(plan, points);
	}
	if (!buckets) {
		const rows = await readRollups(db, run.id, plan.rollup_s!, plan.from_ms, plan.to_ms - 1);
		buckets = bucketsFromRollups(rows, plan, run.states);
	}
	const uSwitch = modelUncertainty(info, 'switching');
	const uEscape = modelUncertainty(info, 'escape');
	return {
		resolution_s: plan.width_s,
		rollup_s: plan.rollup_s,
		span: { from_ms, to_ms },
		buckets: buckets.map((b) => {
			const T = b.aux[TEMPERATURE_AUX]?.mean ?? null;
			return {
				...b,
				switches_band: expectedBand(b.expected_switches, uSwitch, T),
				escapes_band: expectedBand(b.expected_escapes, uEscape, T)
			};
		})
	};
}
