// Timeline buckets from rollup rows (or from rollups of frames at the bucket width): every row
// is re-keyed to the bucket of the plan's grid that holds it and merged there, so a bucket's
// sums are exactly those of the rows — and so of the frames — inside it. Empty buckets are kept
// (frames: 0) so that lost data and quiet stretches show as such.
import { mergeRollups, type Rollup } from '../rollup/rollup';
import type { TimelinePlan } from './plan';

export type Summary = { min: number; mean: number; max: number };

/** One bucket as the timeline API sends it; times are agent-clock ms, [from_ms, to_ms). */
export type TimelineBucket = {
	from_ms: number;
	to_ms: number;
	frames: number;
	shots: number;
	vacuum: number;
	counts: number[];
	switches: number;
	dwell_s: number;
	escapes: number;
	vacuum_s: number;
	/** Null when the bucket holds no frame. */
	lock: Summary | null;
	aux: Record<string, Summary>;
	/** Sum of the frames' predicted counts; null when none had a prediction. */
	expected_switches: number | null;
	expected_escapes: number | null;
};

export type Timeline = {
	/** Bucket width, seconds. */
	resolution_s: number;
	/** Where the buckets came from: rollups of this resolution, or null for frames. */
	rollup_s: number | null;
	buckets: TimelineBucket[];
};

function emptyBucket(from_ms: number, to_ms: number, states: number): TimelineBucket {
	return {
		from_ms,
		to_ms,
		frames: 0,
		shots: 0,
		vacuum: 0,
		counts: new Array<number>(states).fill(0),
		switches: 0,
		dwell_s: 0,
		escapes: 0,
		vacuum_s: 0,
		lock: null,
		aux: {},
		expected_switches: null,
		expected_escapes: null
	};
}

function toBucket(r: Rollup, from_ms: number, to_ms: number): TimelineBucket {
	const aux: Record<string, Summary> = {};
	for (const [name, a] of Object.entries(r.aux)) aux[name] = { min: a.min, mean: a.sum / a.n, max: a.max };
	return {
		from_ms,
		to_ms,
		frames: r.frames,
		shots: r.shots,
		vacuum: r.vacuum,
		counts: [...r.counts],
		switches: r.switches,
		dwell_s: r.dwell_s,
		escapes: r.escapes,
		vacuum_s: r.vacuum_s,
		lock: r.frames > 0 ? { min: r.lockMin, mean: r.lockSum / r.frames, max: r.lockMax } : null,
		aux,
		expected_switches: r.expectedSwitches,
		expected_escapes: r.expectedEscapes
	};
}

/**
 * The plan's buckets from `rows`, which must be rollups whose buckets lie on the plan's grid or
 * subdivide it (resolution dividing the width). Rows outside the plan's span are ignored.
 * `states` is K, for the counts of empty buckets.
 */
export function bucketsFromRollups(rows: readonly Rollup[], plan: TimelinePlan, states: number): TimelineBucket[] {
	const width_ms = plan.width_s * 1000;
	const merged = new Map<number, Rollup>();
	for (const row of rows) {
		if (width_ms % (row.resolution_s * 1000) !== 0) {
			throw new RangeError(`timeline: a ${row.resolution_s} s rollup cannot be split into ${plan.width_s} s buckets`);
		}
		if (row.bucket_t < plan.from_ms || row.bucket_t >= plan.to_ms) continue;
		const start = Math.floor(row.bucket_t / width_ms) * width_ms;
		const rekeyed: Rollup = { ...row, resolution_s: plan.width_s, bucket_t: start };
		const prev = merged.get(start);
		merged.set(start, prev ? mergeRollups(prev, rekeyed) : rekeyed);
	}
	const buckets: TimelineBucket[] = [];
	for (let i = 0; i < plan.count; i++) {
		const from = plan.from_ms + i * width_ms;
		const r = merged.get(from);
		buckets.push(r ? toBucket(r, from, from + width_ms) : emptyBucket(from, from + width_ms, states));
	}
	return buckets;
}
