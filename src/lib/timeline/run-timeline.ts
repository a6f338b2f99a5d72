// The timeline as the API and the page carry it: buckets with the rate model's bands.
import type { Timeline, TimelineBucket } from './buckets';
import type { CountBand } from './model-band';

export type BandedBucket = TimelineBucket & {
	/** The rate model's band around expected_switches / expected_escapes; null without a model. */
	switches_band: CountBand | null;
	escapes_band: CountBand | null;
};

export type RunTimeline = Omit<Timeline, 'buckets'> & {
	buckets: BandedBucket[];
	/** The span asked for (or the whole run), before alignment to the bucket grid. */
	span: { from_ms: number; to_ms: number } | null;
};
