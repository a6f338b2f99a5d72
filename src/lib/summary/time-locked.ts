// How much of a span the oscillator was locked: the share of data time whose lock quality was at
// or above the run's lock threshold (the lock_lost rule's `threshold`). Rollups keep only the
// min, mean and max of lock per bucket, so a bucket whose min and max straddle the threshold is
// ambiguous; the caller may resolve such buckets from their frames (`locked_s`), otherwise the
// answer is a range.

export type LockBucket = {
	bucket_t: number;
	resolution_s: number;
	window_s: number;
	lockMin: number;
	lockMax: number;
	/** Data seconds with lock ≥ threshold, when counted from the bucket's frames. */
	locked_s?: number;
};

export type TimeLocked = {
	threshold: number;
	data_s: number;
	/** Locked seconds for certain, and at most. Equal when every bucket was decided. */
	locked_s_min: number;
	locked_s_max: number;
	/** Shares of data time; null without data. */
	fraction_min: number | null;
	fraction_max: number | null;
	/** Buckets that straddled the threshold and were not counted from frames. */
	undecided_buckets: number;
};

/** Whether a bucket's frames must be looked at to tell how long it was locked. */
export function straddles(b: Pick<LockBucket, 'lockMin' | 'lockMax'>, threshold: number): boolean {
	return b.lockMin < threshold && b.lockMax >= threshold;
}

export function timeLocked(buckets: readonly LockBucket[], threshold: number): TimeLocked {
	if (!Number.isFinite(threshold) || threshold < 0 || threshold > 1)
		throw new RangeError(`time locked: threshold must lie in [0, 1], got ${threshold}`);
	let data_s = 0;
	let min = 0;
	let max = 0;
	let undecided = 0;
	for (const b of buckets) {
		data_s += b.window_s;
		if (b.lockMin >= threshold) {
			min += b.window_s;
			max += b.window_s;
		} else if (b.lockMax < threshold) {
			continue;
		} else if (b.locked_s !== undefined) {
			if (b.locked_s < 0 || b.locked_s > b.window_s * (1 + 1e-9)) {
				throw new RangeError(`time locked: bucket ${b.bucket_t} claims ${b.locked_s} s locked of ${b.window_s} s`);
			}
			min += b.locked_s;
			max += b.locked_s;
		} else {
			max += b.window_s;
			undecided += 1;
		}
	}
	return {
		threshold,
		data_s,
		locked_s_min: min,
		locked_s_max: max,
		fraction_min: data_s > 0 ? min / data_s : null,
		fraction_max: data_s > 0 ? max / data_s : null,
		undecided_buckets: undecided
	};
}
