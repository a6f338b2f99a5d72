// Occupancy per phase state over a span, with the equal-occupancy test the occupancy_imbalance
// detector uses (src/lib/detect: observed-transitions chi-square, or batch means where the frames
// carried no transitions), applied to the whole span instead of the detector's sliding horizon.
import { BATCHES, batchMeansOccupancy } from '../detect/occupancy-batch';
import { chiSquareUpperTail, observedModes, occupancyModes, occupancyStatisticFromModes } from '../detect/occupancy-model';

export type OccupancyTestResult = {
	method: 'observed transitions' | 'batch means';
	/** χ² (observed transitions) or null (batch means, which combines per-mode t tests). */
	statistic: number | null;
	dof: number;
	pValue: number;
	/** Per state: (f_i − 1/K) over its standard error under equal occupancy. */
	residuals: number[];
};

export type OccupancySummary = {
	states: number;
	shots: number;
	counts: number[];
	fractions: number[];
	test: OccupancyTestResult | null;
	/** Why there is no test, in words; null when there is one. */
	untested: string | null;
};

export type OccupancyInput = {
	counts: readonly number[];
	escapes: number;
	/** K×K transitions summed over the span, or null when some buckets had none. */
	transitions: readonly number[] | null;
	/** Shot counts per bucket in time order (for batch means when transitions are missing). */
	bucketCounts: readonly (readonly number[])[];
	expectedPairs: 'neighbours' | 'all' | [number, number][];
	/** Equal filling is expected only at a symmetric operating point. */
	symmetric: boolean;
};

/** Consecutive buckets pooled into BATCHES batches (leading leftovers dropped, as the detector does). */
export function poolIntoBatches(rows: readonly (readonly number[])[], batches = BATCHES): number[][] {
	const per = Math.floor(rows.length / batches);
	if (per === 0) return [];
	const skip = rows.length - per * batches;
	const out: number[][] = [];
	for (let b = 0; b < batches; b++) {
		const sum = new Array<number>(rows[0].length).fill(0);
		for (let r = skip + b * per; r < skip + (b + 1) * per; r++) rows[r].forEach((c, i) => (sum[i] += c));
		out.push(sum);
	}
	return out;
}

export function occupancySummary(input: OccupancyInput): OccupancySummary {
	const K = input.counts.length;
	const shots = input.counts.reduce((a, b) => a + b, 0);
	const counts = [...input.counts];
	const fractions = counts.map((c) => (shots > 0 ? c / shots : 0));
	const result = (test: OccupancyTestResult | null, untested: string | null): OccupancySummary => ({
		states: K,
		shots,
		counts,
		fractions,
		test,
		untested
	});
	if (K < 2) return result(null, 'a single state has no occupancy to compare');
	if (shots === 0) return result(null, 'no shots landed in a phase state');
	if (!input.symmetric) return result(null, 'the operating point is not symmetric, so equal filling is not expected');
	if (input.transitions && input.transitions.length === K * K) {
		const stat = occupancyStatisticFromModes(counts, observedModes(K, input.transitions), input.escapes, true, true);
		if (!stat || stat.dof === 0) return result(null, 'no switches between states, so the shots are one long dwell');
		return result(
			{
				method: 'observed transitions',
				statistic: stat.statistic,
				dof: stat.dof,
				pValue: chiSquareUpperTail(stat.statistic, stat.dof),
				residuals: stat.residuals
			},
			null
		);
	}
	const batches = poolIntoBatches(input.bucketCounts);
	const test = batches.length ? batchMeansOccupancy(batches, occupancyModes(K, input.expectedPairs).vectors) : null;
	if (!test) return result(null, `too few stored buckets for batch means (need ${BATCHES} holding shots)`);
	return result({ method: 'batch means', statistic: null, dof: test.dof, pValue: test.pValue, residuals: test.residuals }, null);
}
