// Equal occupancy when frames carry no `transitions`: the variance of the horizon's occupancy
// fractions is estimated from the horizon itself by non-overlapping batch means, so no switching
// graph has to be assumed (the assumed graph is what fails on paired states).
//
// The horizon is cut into B batches of consecutive windows. Along each direction v_m orthogonal
// to the constant vector (the modes of the expected-pair graph: any orthonormal basis would do),
// the batch projections y_b = v_m·f_b have a sample variance s²; when a batch is longer than the
// relaxation time of the occupancy, the batches are close to independent and
//     t_m = ȳ / (s/√B)
// is Student-t with B − 1 degrees of freedom under equal occupancy (the batch-means method:
// Law & Kelton, Simulation Modeling and Analysis, §9.5.3; Schmeiser 1982 on the choice of B ≤ 30).
// The K − 1 per-mode tests are combined by Bonferroni (min p × tests), which holds however the
// modes correlate. Batches too short for the slowest relaxation make s² too small; the rule's
// horizon should span many dwell episodes (the detector tests only a full horizon).
import jStat from 'jstat';

export const BATCHES = 10;

export type BatchMeansTest = {
	method: 'batch means';
	batches: number;
	/** Per mode: Student-t statistic (null where the batches do not vary: no information). */
	t: (number | null)[];
	dof: number;
	pValue: number;
	fractions: number[];
	/** Per state: (f_i − 1/K) over its batch-means standard error. */
	residuals: number[];
};

/**
 * counts: batches × K shot counts (one row per batch). vectors: K − 1 orthonormal directions
 * orthogonal to the constant vector. Returns null when fewer than two batches hold shots.
 */
export function batchMeansOccupancy(
	counts: readonly (readonly number[])[],
	vectors: readonly (readonly number[])[]
): BatchMeansTest | null {
	const K = counts[0]?.length ?? 0;
	const batches: number[][] = [];
	const total = new Array<number>(K).fill(0);
	for (const row of counts) {
		if (row.length !== K) throw new RangeError(`batchMeansOccupancy: every batch needs ${K} counts, got ${row.length}`);
		const n = row.reduce((a, b) => a + b, 0);
		if (n <= 0) continue;
		batches.push(row.map((c) => c / n));
		row.forEach((c, i) => (total[i] += c));
	}
	const B = batches.length;
	if (B < 2) return null;
	const shots = total.reduce((a, b) => a + b, 0);
	const fractions = total.map((c) => c / shots);
	const t: (number | null)[] = [];
	let minP = 1;
	let tests = 0;
	for (const v of vectors) {
		const y = batches.map((f) => f.reduce((a, fi, i) => a + fi * v[i], 0));
		const mean = y.reduce((a, b) => a + b, 0) / B;
		const s2 = y.reduce((a, b) => a + (b - mean) ** 2, 0) / (B - 1);
		if (!(s2 > 1e-24)) {
			t.push(null);
			continue;
		}
		const tm = mean / Math.sqrt(s2 / B);
		t.push(tm);
		tests += 1;
		minP = Math.min(minP, 2 * (1 - jStat.studentt.cdf(Math.abs(tm), B - 1)));
	}
	const residuals = new Array<number>(K).fill(0);
	for (let i = 0; i < K; i++) {
		const y = batches.map((f) => f[i]);
		const mean = y.reduce((a, b) => a + b, 0) / B;
		const s2 = y.reduce((a, b) => a + (b - mean) ** 2, 0) / (B - 1);
		residuals[i] = s2 > 1e-24 ? (fractions[i] - 1 / K) / Math.sqrt(s2 / B) : 0;
	}
	return { method: 'batch means', batches: B, t, dof: B - 1, pValue: tests === 0 ? 1 : Math.min(1, minP * tests), fractions, residuals };
}
