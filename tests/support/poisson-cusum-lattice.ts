// An independent reference for the Poisson CUSUM's run length: the Brook & Evans (1972) Markov
// chain on a lattice of step 1/m counts, with the reference value k = μ(ρ − 1)/ln ρ rounded to
// the nearest multiple of 1/m — Lucas's (1985) integer scaling of k and h. When m·k is an
// integer the lattice chain is exact; otherwise its only error is the rounding of k, which
// shrinks as the lattice is refined; and since the run length is monotone in k (with the same
// counts a larger k gives a pathwise smaller upward statistic and a larger downward one), the
// lattices whose k lies just below and just above the true k bracket the exact run length. It solves (I − R)·ARL = 1 by elimination, so it shares no
// code with stats/cusum.ts (which follows the chain's exact states cycle by cycle).
import jStat from 'jstat';

/** P(K = x) for x = 0…xMax, K ~ Poisson(mu). */
function poissonTable(mu: number, xMax: number): Float64Array {
	const pmf = new Float64Array(xMax + 1);
	for (let x = 0; x <= xMax; x++) pmf[x] = Math.exp(-mu + x * Math.log(mu) - jStat.gammaln(x + 1));
	return pmf;
}

/**
 * Solves A·[u v] = [b c] in place for an N×N row-major matrix whose entries below the diagonal
 * vanish beyond `lowerBand` rows (A[r][c] = 0 for r > c + lowerBand): Gaussian elimination
 * without pivoting, which is stable here because I − R is diagonally dominant by rows.
 */
function solveLowerBanded(A: Float64Array, n: number, lowerBand: number, b: Float64Array, c: Float64Array): void {
	for (let col = 0; col < n; col++) {
		const pivot = A[col * n + col];
		const last = Math.min(n - 1, col + lowerBand);
		for (let r = col + 1; r <= last; r++) {
			const f = A[r * n + col] / pivot;
			if (f === 0) continue;
			for (let j = col; j < n; j++) A[r * n + j] -= f * A[col * n + j];
			b[r] -= f * b[col];
			c[r] -= f * c[col];
		}
	}
	for (let r = n - 1; r >= 0; r--) {
		let sb = b[r];
		let sc = c[r];
		for (let j = r + 1; j < n; j++) {
			sb -= A[r * n + j] * b[j];
			sc -= A[r * n + j] * c[j];
		}
		b[r] = sb / A[r * n + r];
		c[r] = sc / A[r * n + r];
	}
}

/**
 * In-control (trueRatio = 1) or shifted ARL of the one-sided Poisson CUSUM with decision
 * interval h and ratio rho at muPerStep expected counts per step, from the zero start, on a
 * lattice of `stepsPerCount` states per count, with k rounded to the nearest lattice step or
 * set to `kSteps` of them. Returns the ARL and the k the lattice used.
 */
export function poissonCusumArlOnLattice(
	h: number,
	rho: number,
	muPerStep: number,
	trueRatio: number,
	stepsPerCount: number,
	kSteps = Math.round((stepsPerCount * muPerStep * (rho - 1)) / Math.log(rho))
): { arl: number; kUsed: number; states: number } {
	const a = Math.log(rho);
	const m = stepsPerCount;
	const n = Math.ceil(m * (h / Math.abs(a)) - 1e-9);
	if (n > 4000) throw new RangeError(`a lattice of ${n} states is too large for this reference`);
	const upward = a > 0;
	const mu = trueRatio * muPerStep;
	const xMax = Math.ceil((n + kSteps) / m) + 1;
	const pmf = poissonTable(mu, xMax);

	// Unknowns in an order that makes I − R lower-banded: the upward chart falls by at most
	// kSteps per step, the downward one rises by at most kSteps, so it is stored in reverse.
	// The column of the state 0 (every fall below 0 lands there) is taken out and solved for by
	// superposition: ARL = u + ARL(0)·v with (I − R′)u = 1, (I − R′)v = r₀.
	const index = (s: number) => (upward ? s : n - 1 - s);
	const A = new Float64Array(n * n);
	const ones = new Float64Array(n).fill(1);
	const toZero = new Float64Array(n);
	for (let s = 0; s < n; s++) {
		const row = index(s);
		A[row * n + row] += 1;
		let probabilityLeft = 1;
		for (let x = 0; x <= xMax; x++) {
			const p = pmf[x];
			probabilityLeft -= p;
			const t = upward ? s + m * x - kSteps : s + kSteps - m * x;
			if (t >= n) {
				if (upward) break; // this and every larger count signal
				continue;
			}
			if (t <= 0) {
				if (upward) toZero[row] += p;
				else {
					// this and every larger count fall to 0
					toZero[row] += p + Math.max(0, probabilityLeft);
					break;
				}
				continue;
			}
			A[row * n + index(t)] -= p;
		}
	}
	solveLowerBanded(A, n, kSteps, ones, toZero);
	const zero = index(0);
	const arl = ones[zero] / (1 - toZero[zero]);
	return { arl, kUsed: kSteps / m, states: n };
}

/** A lattice: m steps per count, with k = kSteps/m. */
export type Lattice = { m: number; kSteps: number };

/**
 * The lattices with m between minSteps and maxSteps whose k lies closest below and closest
 * above the true k (best one-sided rational approximations of k).
 */
export function bracketingLattices(k: number, minSteps: number, maxSteps: number): { below: Lattice; above: Lattice } {
	let below: Lattice = { m: minSteps, kSteps: Math.floor(minSteps * k) };
	let above: Lattice = { m: minSteps, kSteps: Math.ceil(minSteps * k) };
	for (let m = minSteps; m <= maxSteps; m++) {
		const lo = Math.floor(m * k);
		const hi = Math.ceil(m * k);
		if (lo / m > below.kSteps / below.m) below = { m, kSteps: lo };
		if (hi / m < above.kSteps / above.m) above = { m, kSteps: hi };
	}
	return { below, above };
}
