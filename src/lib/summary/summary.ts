// The run summary of a span, computed from the rollup buckets that cover it (never from all
// frames): exposure, rates against the prediction, time locked, occupancy with its test, the
// state-to-state transition matrix, lost data and incidents. Pure; src/lib/server/summary gathers.
import type { Rollup } from '../rollup/rollup';
import { incidentLine, median, type IncidentFacts, type IncidentLine } from './incidents';
import { lostData, type GapWithNeighbours, type LostData } from './lost-data';
import { occupancySummary, type OccupancySummary } from './occupancy';
import { compareRate, type RateComparison } from './rates';
import { timeLocked, type TimeLocked } from './time-locked';

/** A note pinned to a time or span (the annotations feature supplies them; the summary only shows them). */
export type SummaryAnnotation = { id: string | number; at_ms: number; until_ms: number | null; text: string; author?: string | null };

export type Exposure = {
	frames: number;
	shots: number;
	vacuumShots: number;
	/** Seconds of data: the frames' windows added up. */
	data_s: number;
	/** Seconds spent in phase states and in vacuum (the exposures of the two rates). */
	dwell_s: number;
	vacuum_s: number;
	/** Agent time of the first and last bucket holding data; null without data. */
	first_ms: number | null;
	last_ms: number | null;
};

export type TransitionMatrix = { states: number; counts: number[][]; total: number } | null;

export type RunSummary = {
	runId: string;
	states: number;
	/** The span asked for, and the whole buckets that answered it (edges widened to 10 s). */
	span: { from_ms: number; to_ms: number };
	covered: { from_ms: number; to_ms: number };
	exposure: Exposure;
	switching: RateComparison;
	escape: RateComparison;
	/** Mean lock quality over the frames; null without frames. */
	lockMean: number | null;
	timeLocked: TimeLocked;
	occupancy: OccupancySummary;
	transitions: TransitionMatrix;
	lost: LostData;
	incidents: IncidentLine[];
	incidentTimes: { medianToAcknowledge_s: number | null; medianToResolve_s: number | null };
	annotations: SummaryAnnotation[];
};

export type SummaryInput = {
	runId: string;
	states: number;
	span: { from_ms: number; to_ms: number };
	covered: { from_ms: number; to_ms: number };
	/** The covering buckets, any resolutions, in time order. */
	buckets: readonly Rollup[];
	/** Locked seconds counted from frames for buckets that straddle the threshold, by `${resolution_s}:${bucket_t}`. */
	lockedFromFrames?: ReadonlyMap<string, number>;
	lockThreshold: number;
	expectedPairs: 'neighbours' | 'all' | [number, number][];
	symmetric: boolean;
	gaps: readonly GapWithNeighbours[];
	incidents: readonly IncidentFacts[];
	annotations?: readonly SummaryAnnotation[];
	confidence?: number;
};

/** K×K counts as rows (from state) × columns (to state); null when no bucket carried transitions. */
export function transitionMatrix(flat: readonly number[] | null, K: number): TransitionMatrix {
	if (!flat) return null;
	if (flat.length !== K * K) throw new RangeError(`transitions: expected ${K * K} entries for ${K} states, got ${flat.length}`);
	const counts = Array.from({ length: K }, (_, i) => flat.slice(i * K, (i + 1) * K));
	return { states: K, counts, total: flat.reduce((a, b) => a + b, 0) };
}

export function summarize(input: SummaryInput): RunSummary {
	const K = input.states;
	const counts = new Array<number>(K).fill(0);
	let transitions: number[] | null = null;
	let allHaveTransitions = input.buckets.length > 0;
	const e = { frames: 0, shots: 0, vacuumShots: 0, data_s: 0, dwell_s: 0, vacuum_s: 0, switches: 0, escapes: 0, lockSum: 0 };
	let expectedSwitches: number | null = null;
	let expectedEscapes: number | null = null;
	for (const b of input.buckets) {
		if (b.counts.length !== K) throw new RangeError(`summary: bucket ${b.bucket_t} has ${b.counts.length} counts, the run has ${K} states`);
		e.frames += b.frames;
		e.shots += b.shots;
		e.vacuumShots += b.vacuum;
		e.data_s += b.window_s;
		e.dwell_s += b.dwell_s;
		e.vacuum_s += b.vacuum_s;
		e.switches += b.switches;
		e.escapes += b.escapes;
		e.lockSum += b.lockSum;
		b.counts.forEach((c, i) => (counts[i] += c));
		if (b.transitions) {
			transitions ??= new Array<number>(K * K).fill(0);
			b.transitions.forEach((c, i) => (transitions![i] += c));
		} else allHaveTransitions = false;
		if (b.expectedSwitches !== null) expectedSwitches = (expectedSwitches ?? 0) + b.expectedSwitches;
		if (b.expectedEscapes !== null) expectedEscapes = (expectedEscapes ?? 0) + b.expectedEscapes;
	}
	const withData = input.buckets.filter((b) => b.frames > 0);
	const lastBucket = withData.at(-1);
	const exposure: Exposure = {
		frames: e.frames,
		shots: e.shots,
		vacuumShots: e.vacuumShots,
		data_s: e.data_s,
		dwell_s: e.dwell_s,
		vacuum_s: e.vacuum_s,
		first_ms: withData[0]?.bucket_t ?? null,
		last_ms: lastBucket ? lastBucket.bucket_t + lastBucket.resolution_s * 1000 : null
	};
	const confidence = input.confidence ?? 0.95;
	const locked = timeLocked(
		input.buckets.map((b) => ({
			bucket_t: b.bucket_t,
			resolution_s: b.resolution_s,
			window_s: b.window_s,
			lockMin: b.lockMin,
			lockMax: b.lockMax,
			locked_s: input.lockedFromFrames?.get(`${b.resolution_s}:${b.bucket_t}`)
		})),
		input.lockThreshold
	);
	const incidents = input.incidents.map(incidentLine).sort((a, b) => a.opened_ms - b.opened_ms);
	return {
		runId: input.runId,
		states: K,
		span: input.span,
		covered: input.covered,
		exposure,
		switching: compareRate(e.switches, e.dwell_s, expectedSwitches, confidence),
		escape: compareRate(e.escapes, e.vacuum_s, expectedEscapes, confidence),
		lockMean: e.frames > 0 ? e.lockSum / e.frames : null,
		timeLocked: locked,
		occupancy: occupancySummary({
			counts,
			escapes: e.escapes,
			transitions: allHaveTransitions ? transitions : null,
			bucketCounts: input.buckets.filter((b) => b.frames > 0).map((b) => b.counts),
			expectedPairs: input.expectedPairs,
			symmetric: input.symmetric
		}),
		transitions: transitionMatrix(transitions, K),
		lost: lostData(input.gaps, input.covered.from_ms, input.covered.to_ms),
		incidents,
		incidentTimes: {
			medianToAcknowledge_s: median(incidents.map((i) => i.toAcknowledge_s)),
			medianToResolve_s: median(incidents.map((i) => i.toResolve_s))
		},
		annotations: [...(input.annotations ?? [])].sort((a, b) => a.at_ms - b.at_ms)
	};
}
