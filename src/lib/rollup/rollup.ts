// Aggregates of a run's frames over fixed buckets of agent time, at a few resolutions, so a
// week-long run's timeline reads thousands of rows instead of millions of frames. Pure: the
// server glue (src/lib/server/rollups) stores and merges them. Written by hand because the
// aggregates are plain sums/min/max over our own frame type; no package does this shape.
//
// Every Rollup is a delta that can be merged with any other of the same key in any order, so a
// writer can roll up each committed batch on its own (late frames included) and add it to the
// stored row. Merging is exact for the integer fields; float sums depend on order (rounding).
import type { Frame } from '../protocol/frame';

export const ROLLUP_RESOLUTIONS_S = [10, 60, 600, 3600] as const;

/** One aux value's summary over a bucket (the schema's `frame_rollups.aux` holds these by name). */
export type AuxAggregate = { min: number; max: number; sum: number; n: number };

export interface Rollup {
	resolution_s: number;
	/** Start of the bucket, agent clock (Unix ms). */
	bucket_t: number;
	frames: number;
	firstSeq: number;
	lastSeq: number;
	window_s: number;
	shots: number;
	vacuum: number;
	counts: number[];
	switches: number;
	dwell_s: number;
	escapes: number;
	vacuum_s: number;
	/** K·K switch counts summed over the frames that carried them; null when none did. */
	transitions: number[] | null;
	lockMin: number;
	lockSum: number;
	lockMax: number;
	aux: Record<string, AuxAggregate>;
	/** Sum of the frames' predicted counts; null when no frame in the bucket had a prediction. */
	expectedSwitches: number | null;
	expectedEscapes: number | null;
}

export type FrameExpected = { switches: number | null; escapes: number | null } | null;
export type ExpectedOf = (frame: Frame, index: number) => FrameExpected;

/** Start (ms) of the bucket of `resolution_s` seconds holding agent time t_ms. */
export function bucketStart(t_ms: number, resolution_s: number): number {
	if (!Number.isFinite(t_ms)) throw new RangeError(`rollup: frame time ${t_ms} is not a finite number of ms`);
	if (!Number.isInteger(resolution_s) || resolution_s <= 0) {
		throw new RangeError(`rollup: resolution ${resolution_s} s must be a positive whole number of seconds`);
	}
	const width_ms = resolution_s * 1000;
	return Math.floor(t_ms / width_ms) * width_ms;
}

export function rollupKey(r: Pick<Rollup, 'resolution_s' | 'bucket_t'>): string {
	return `${r.resolution_s}:${r.bucket_t}`;
}

const addNullable = (a: number | null, b: number | null): number | null => (a === null ? b : b === null ? a : a + b);

function addElementwise(a: number[], b: number[], what: string, key: string): number[] {
	if (a.length !== b.length) {
		throw new RangeError(`rollup ${key}: ${what} have ${a.length} and ${b.length} entries; a bucket holds one run's frames (same K)`);
	}
	return a.map((v, i) => v + b[i]);
}

function mergeAux(a: Record<string, AuxAggregate>, b: Record<string, AuxAggregate>): Record<string, AuxAggregate> {
	const out: Record<string, AuxAggregate> = {};
	for (const [name, agg] of Object.entries(a)) out[name] = { ...agg };
	for (const [name, agg] of Object.entries(b)) {
		const prev = out[name];
		out[name] = prev
			? { min: Math.min(prev.min, agg.min), max: Math.max(prev.max, agg.max), sum: prev.sum + agg.sum, n: prev.n + agg.n }
			: { ...agg };
	}
	return out;
}

/** The rollup of a single frame in one bucket. */
function single(frame: Frame, expected: FrameExpected, resolution_s: number): Rollup {
	// Frames are stored with t rounded to whole ms (frameToRow): bucket by that value so live
	// rollups and a rebuild from stored frames put a frame on a bucket edge in the same bucket.
	const bucket_t = bucketStart(Math.round(frame.t), resolution_s);
	const aux: Record<string, AuxAggregate> = {};
	for (const [name, v] of Object.entries(frame.aux ?? {})) aux[name] = { min: v, max: v, sum: v, n: 1 };
	return {
		resolution_s,
		bucket_t,
		frames: 1,
		firstSeq: frame.seq,
		lastSeq: frame.seq,
		window_s: frame.window_s,
		shots: frame.shots,
		vacuum: frame.vacuum,
		counts: [...frame.counts],
		switches: frame.switches,
		dwell_s: frame.dwell_s,
		escapes: frame.escapes,
		vacuum_s: frame.vacuum_s,
		transitions: frame.transitions ? [...frame.transitions] : null,
		lockMin: frame.lock,
		lockSum: frame.lock,
		lockMax: frame.lock,
		aux,
		expectedSwitches: expected?.switches ?? null,
		expectedEscapes: expected?.escapes ?? null
	};
}

/**
 * Adds two rollups of the same (resolution, bucket). Commutative and associative (floats up to
 * rounding). Throws a RangeError naming the problem when the keys or the number of states differ.
 * Adding the same frame twice counts it twice: callers roll up only frames actually stored.
 */
export function mergeRollups(a: Rollup, b: Rollup): Rollup {
	const key = rollupKey(a);
	if (key !== rollupKey(b))
		throw new RangeError(`rollup: cannot merge bucket ${key} with bucket ${rollupKey(b)} (resolution_s:bucket_t differ)`);
	let transitions: number[] | null;
	if (a.transitions && b.transitions) transitions = addElementwise(a.transitions, b.transitions, 'transitions', key);
	else transitions = a.transitions ? [...a.transitions] : b.transitions ? [...b.transitions] : null;
	return {
		resolution_s: a.resolution_s,
		bucket_t: a.bucket_t,
		frames: a.frames + b.frames,
		firstSeq: Math.min(a.firstSeq, b.firstSeq),
		lastSeq: Math.max(a.lastSeq, b.lastSeq),
		window_s: a.window_s + b.window_s,
		shots: a.shots + b.shots,
		vacuum: a.vacuum + b.vacuum,
		counts: addElementwise(a.counts, b.counts, 'counts', key),
		switches: a.switches + b.switches,
		dwell_s: a.dwell_s + b.dwell_s,
		escapes: a.escapes + b.escapes,
		vacuum_s: a.vacuum_s + b.vacuum_s,
		transitions,
		lockMin: Math.min(a.lockMin, b.lockMin),
		lockSum: a.lockSum + b.lockSum,
		lockMax: Math.max(a.lockMax, b.lockMax),
		aux: mergeAux(a.aux, b.aux),
		expectedSwitches: addNullable(a.expectedSwitches, b.expectedSwitches),
		expectedEscapes: addNullable(a.expectedEscapes, b.expectedEscapes)
	};
}

/**
 * One Rollup per (resolution, bucket) the frames touch, each aggregating just these frames (a
 * delta to merge into what is stored). Sorted by resolution, then bucket. `expectedOf` gives each
 * frame's predicted counts (null: no prediction).
 */
export function rollupFrames(
	frames: readonly Frame[],
	expectedOf: ExpectedOf,
	resolutions: readonly number[] = ROLLUP_RESOLUTIONS_S
): Rollup[] {
	const byKey = new Map<string, Rollup>();
	frames.forEach((frame, i) => {
		const expected = expectedOf(frame, i);
		for (const resolution_s of resolutions) {
			const one = single(frame, expected, resolution_s);
			const key = rollupKey(one);
			const prev = byKey.get(key);
			byKey.set(key, prev ? mergeRollups(prev, one) : one);
		}
	});
	return [...byKey.values()].sort((a, b) => a.resolution_s - b.resolution_s || a.bucket_t - b.bucket_t);
}
