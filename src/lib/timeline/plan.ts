// Which stored data a timeline of N buckets over a span reads, and how wide its buckets are.
// Pure, so the choice is unit-tested apart from the database.
//
// The ideal bucket is span/N wide. Rows finer than that would only be merged away, and rows
// coarser would lose detail, so the timeline reads the coarsest rollup resolution not wider than
// the ideal bucket and merges k adjacent rows into one bucket (k·resolution, the smallest k that
// fits N). A bucket is then narrower than twice the ideal, so N/2 < count ≤ N, and the rows read
// stay below ~10·N (the ratio between neighbouring resolutions). When even the finest rollup is
// wider than the ideal bucket, the frames themselves are aggregated into buckets of whole seconds.
// Bucket edges are multiples of the bucket width from the epoch, the same grid the rollups use,
// so each rollup row falls wholly inside one bucket and the sums stay honest.
import { ROLLUP_RESOLUTIONS_S } from '../rollup/rollup';

export const TIMELINE_POINTS_DEFAULT = 1000;
export const TIMELINE_POINTS_MAX = 10_000;
/** Finest bucket drawn from frames: finer ones would split single windows into empty slivers. */
export const FRAME_BUCKET_MIN_S = 1;

export type TimelinePlan = {
	/** 'rollups': merge stored rows of `rollup_s`; 'frames': aggregate frames directly. */
	source: 'rollups' | 'frames';
	/** Resolution of the rollup rows read; null when frames are read. */
	rollup_s: number | null;
	/** Bucket width, seconds (a multiple of rollup_s when rollups are read). */
	width_s: number;
	/** First bucket start and last bucket end (exclusive), ms; the asked span lies inside. */
	from_ms: number;
	to_ms: number;
	count: number;
};

export class TimelineRangeError extends RangeError {
	constructor(
		readonly field: 'points' | 'from_ms' | 'to_ms',
		message: string
	) {
		super(`${field}: ${message}`);
		this.name = 'TimelineRangeError';
	}
}

export function checkPoints(points: number): number {
	if (!Number.isInteger(points) || points < 1 || points > TIMELINE_POINTS_MAX) {
		throw new TimelineRangeError('points', `must be a whole number from 1 to ${TIMELINE_POINTS_MAX}, got ${points}`);
	}
	return points;
}

/** Buckets of width_s covering [from_ms, to_ms): edges on the epoch grid of that width. */
export function gridFor(from_ms: number, to_ms: number, width_s: number) {
	const w = width_s * 1000;
	const start = Math.floor(from_ms / w) * w;
	const end = Math.max(start + w, Math.ceil(to_ms / w) * w);
	return { from_ms: start, to_ms: end, count: Math.round((end - start) / w) };
}

/** Smallest multiple of base_s (≥ the first one at least ideal_s wide) whose grid fits `points`. */
function fitWidth(from_ms: number, to_ms: number, base_s: number, ideal_s: number, points: number) {
	let k = Math.max(1, Math.ceil(ideal_s / base_s));
	for (;;) {
		const grid = gridFor(from_ms, to_ms, k * base_s);
		if (grid.count <= points) return { width_s: k * base_s, ...grid };
		// Alignment can add one bucket at each end; one or two more steps always fit.
		k += 1;
	}
}

export function planTimeline(from_ms: number, to_ms: number, points: number = TIMELINE_POINTS_DEFAULT): TimelinePlan {
	checkPoints(points);
	if (!Number.isFinite(from_ms)) throw new TimelineRangeError('from_ms', `must be a finite time in ms, got ${from_ms}`);
	if (!Number.isFinite(to_ms) || to_ms <= from_ms) {
		throw new TimelineRangeError('to_ms', `must be a time in ms after from_ms (${from_ms}), got ${to_ms}`);
	}
	const ideal_s = (to_ms - from_ms) / 1000 / points;
	const coarsestFitting = [...ROLLUP_RESOLUTIONS_S].reverse().find((r) => r <= ideal_s);
	if (coarsestFitting === undefined) {
		return { source: 'frames', rollup_s: null, ...fitWidth(from_ms, to_ms, FRAME_BUCKET_MIN_S, ideal_s, points) };
	}
	return { source: 'rollups', rollup_s: coarsestFitting, ...fitWidth(from_ms, to_ms, coarsestFitting, ideal_s, points) };
}
