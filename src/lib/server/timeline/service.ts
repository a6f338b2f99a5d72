// A run's timeline for a span at N buckets: stored rollups merged on the bucket grid, or for
// short spans the frames themselves, read by the seq range the 10 s rollups give (the frames
// table is keyed by seq, not t, so a t-range scan would read the whole run).
import { and, asc, eq, getTableColumns, gte, lte, min } from 'drizzle-orm';
import { modelUncertainty } from '../../detect/model-band';
import { TEMPERATURE_AUX } from '../../detect/expected';
import { parseRunInfo } from '../../detect/run-info';
import { ROLLUP_RESOLUTIONS_S, rollupFrames } from '../../rollup/rollup';
import { bucketsFromRollups, type TimelineBucket } from '../../timeline/buckets';
import { expectedBand } from '../../timeline/model-band';
import type { RunTimeline } from '../../timeline/run-timeline';
import { gridFor, planTimeline, TIMELINE_POINTS_DEFAULT, type TimelinePlan } from '../../timeline/plan';
import type { Db } from '../db';
import { frameRollups, frames } from '../db/schema';
import { rowToFrame } from '../ingest/frame-rows';
import { currentExpectedOf, readRollups } from '../rollups/store';
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

const { iq: _iq, ...columnsWithoutIq } = getTableColumns(frames);

async function framesBuckets(db: Db, run: RunRow, plan: TimelinePlan): Promise<TimelineBucket[] | null> {
	const index = await readRollups(db, run.id, FINEST_ROLLUP_S, plan.from_ms, plan.to_ms - 1);
	const inGrid = index.filter((r) => r.bucket_t < plan.to_ms);
	if (inGrid.length === 0) return bucketsFromRollups([], plan, run.states);
	if (inGrid.reduce((s, r) => s + r.frames, 0) > TIMELINE_FRAMES_MAX) return null;
	const fromSeq = Math.min(...inGrid.map((r) => r.firstSeq));
	const toSeq = Math.max(...inGrid.map((r) => r.lastSeq));
	const rows = await db
		.select(columnsWithoutIq)
		.from(frames)
		.where(and(eq(frames.runId, run.id), gte(frames.seq, fromSeq), lte(frames.seq, toSeq), gte(frames.t, plan.from_ms), lte(frames.t, plan.to_ms - 1)))
		.orderBy(asc(frames.seq))
		.limit(TIMELINE_FRAMES_MAX + 1);
	const read = rows.map((r) => rowToFrame({ ...r, iq: null }));
	const expectedOf = await currentExpectedOf(db, run.id);
	return bucketsFromRollups(rollupFrames(read, expectedOf, [plan.width_s]), plan, run.states);
}

/** The same grid at the finest rollups, for a frame read that would be too large. */
function finestRollupPlan(plan: TimelinePlan, points: number): TimelinePlan {
	for (let k = 1; ; k++) {
		const grid = gridFor(plan.from_ms, plan.to_ms, k * FINEST_ROLLUP_S);
		if (grid.count <= points) return { source: 'rollups', rollup_s: FINEST_ROLLUP_S, width_s: k * FINEST_ROLLUP_S, ...grid };
	}
}

export async function runTimeline(db: Db, run: RunRow, q: TimelineQuery = {}): Promise<RunTimeline> {
	const points = q.points ?? TIMELINE_POINTS_DEFAULT;
	const whole = q.from_ms === undefined || q.to_ms === undefined ? await runSpan(db, run) : null;
	const from_ms = q.from_ms ?? whole?.from_ms;
	const to_ms = q.to_ms ?? whole?.to_ms;
	if (from_ms === undefined || to_ms === undefined || to_ms <= from_ms) {
		// No frames yet and no explicit span: nothing to cover.
		planTimeline(0, 1, points); // still validates N
		return { resolution_s: FINEST_ROLLUP_S, rollup_s: FINEST_ROLLUP_S, buckets: [], span: null };
	}
	let plan = planTimeline(from_ms, to_ms, points);
	let buckets: TimelineBucket[] | null = null;
	if (plan.source === 'frames') {
		buckets = await framesBuckets(db, run, plan);
		if (!buckets) plan = finestRollupPlan(plan, points);
	}
	if (!buckets) {
		const rows = await readRollups(db, run.id, plan.rollup_s!, plan.from_ms, plan.to_ms - 1);
		buckets = bucketsFromRollups(rows, plan, run.states);
	}
	const info = parseRunInfo(await runInfoFor(db, run));
	const uSwitch = modelUncertainty(info, 'switching');
	const uEscape = modelUncertainty(info, 'escape');
	return {
		resolution_s: plan.width_s,
		rollup_s: plan.rollup_s,
		span: { from_ms, to_ms },
		buckets: buckets.map((b) => {
			const T = b.aux[TEMPERATURE_AUX]?.mean ?? null;
			return { ...b, switches_band: expectedBand(b.expected_switches, uSwitch, T), escapes_band: expectedBand(b.expected_escapes, uEscape, T) };
		})
	};
}
