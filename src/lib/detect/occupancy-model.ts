// How much independent information a horizon of phase-state counts holds, and the chi-square
// statistic for equal occupancy that follows from it.
//
// Shots are not independent samples of the state: the oscillator stays in one phase state for
// about 1/W, so thousands of shots in a window may all see one state. A plain chi-square on shot
// counts (NIST/SEMATECH e-Handbook 1.3.5.15) would then flag every slow-switching run. What
// counts is the number of independent dwell episodes. For a symmetric Markov jump process on the
// K states, with equal rates on the expected pairs (the edges of a graph with Laplacian L and mean
// degree d̄), occupancy is uniform, and the fluctuation of the time fractions f along an
// eigenvector v_m of L (eigenvalue ℓ_m, m ≥ 1) relaxes at rate λ_m = r·ℓ_m. Over a long exposure T
// its variance is 2/(λ_m T K) — what n_m = λ_m T/2 independent samples would give. With N the
// number of switches seen (N ≈ r·d̄·T), n_m = N·ℓ_m/(2d̄): n_m = N for two states, N·sin²(π/K) for
// the slowest ring mode, N·K/(2(K−1)) for all pairs. Each escape from vacuum lands in a state at
// random and starts an independent episode, adding one sample to every mode; shot noise adds
// 1/shots to each mode's variance. The statistic
//     X² = Σ_m n_m·K·(v_m · f)²
// is then approximately χ² with one degree of freedom per mode; it reduces to the textbook
// chi-square when every n_m equals the number of shots. The derivation is the standard variance
// of a time average of a reversible Markov chain (2/T·Σ 1/λ_m over its spectral decomposition).
//
// Equal rates on every expected pair are an assumption real devices break: junction-type devices
// with 2M states switch mostly within the pair sharing a saddle (10:1 and more), and with equal
// rates assumed the statistic averaged 12.8 instead of 5 on six such states. The detector therefore
// takes the rates from the horizon's observed transitions (observedModes below); the unit graph
// (occupancyModes) still names the expected pairs and gives the directions batch means test along.
import jStat from 'jstat';

export type OccupancyModes = {
	states: number;
	/** Unit eigenvectors orthogonal to the constant vector, one per mode. */
	vectors: number[][];
	/** Laplacian eigenvalue of each mode divided by twice the mean degree: n_m = N × this. */
	perSwitch: number[];
};

/** Eigen-decomposition of a symmetric matrix (cyclic Jacobi); columns of the result are vectors. */
function jacobiEigen(a: number[][]): { values: number[]; vectors: number[][] } {
	const n = a.length;
	const A = a.map((row) => [...row]);
	const V: number[][] = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)));
	for (let sweep = 0; sweep < 100; sweep++) {
		let off = 0;
		for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += A[i][j] * A[i][j];
		if (off < 1e-26) break;
		for (let p = 0; p < n; p++) {
			for (let q = p + 1; q < n; q++) {
				if (Math.abs(A[p][q]) < 1e-300) continue;
				const theta = (A[q][q] - A[p][p]) / (2 * A[p][q]);
				const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
				const c = 1 / Math.sqrt(t * t + 1);
				const s = t * c;
				for (let k = 0; k < n; k++) {
					const akp = A[k][p];
					const akq = A[k][q];
					A[k][p] = c * akp - s * akq;
					A[k][q] = s * akp + c * akq;
				}
				for (let k = 0; k < n; k++) {
					const apk = A[p][k];
					const aqk = A[q][k];
					A[p][k] = c * apk - s * aqk;
					A[q][k] = s * apk + c * aqk;
				}
				for (let k = 0; k < n; k++) {
					const vkp = V[k][p];
					const vkq = V[k][q];
					V[k][p] = c * vkp - s * vkq;
					V[k][q] = s * vkp + c * vkq;
				}
			}
		}
	}
	const values = A.map((row, i) => row[i]);
	const vectors = values.map((_, j) => V.map((row) => row[j]));
	return { values, vectors };
}

/** The undirected expected pairs as a set of keys i*K + j with i < j. */
export function expectedPairSet(states: number, pairs: 'neighbours' | 'all' | [number, number][]): Set<number> {
	const set = new Set<number>();
	const add = (i: number, j: number) => {
		if (i !== j) set.add(Math.min(i, j) * states + Math.max(i, j));
	};
	if (pairs === 'all') {
		for (let i = 0; i < states; i++) for (let j = i + 1; j < states; j++) add(i, j);
	} else if (pairs === 'neighbours') {
		for (let i = 0; i < states; i++) add(i, (i + 1) % states);
	} else {
		for (const [i, j] of pairs) add(i, j);
	}
	return set;
}

const memo = new Map<string, OccupancyModes>();

/** The modes of the expected-pair graph (pure; remembered, since rules rarely change). */
export function occupancyModes(states: number, pairs: 'neighbours' | 'all' | [number, number][]): OccupancyModes {
	const key = `${states}:${typeof pairs === 'string' ? pairs : JSON.stringify(pairs)}`;
	const known = memo.get(key);
	if (known) return known;
	const set = expectedPairSet(states, pairs);
	const L = Array.from({ length: states }, () => new Array<number>(states).fill(0));
	for (const e of set) {
		const i = Math.floor(e / states);
		const j = e % states;
		L[i][j] -= 1;
		L[j][i] -= 1;
		L[i][i] += 1;
		L[j][j] += 1;
	}
	const meanDegree = (2 * set.size) / states;
	// The constant vector is an eigenvector of L with eigenvalue 0; adding c·11ᵀ/K (c above every
	// eigenvalue of L, which are ≤ 2·max degree ≤ 2K) moves it alone to c, so it can be dropped
	// even when the graph is disconnected and 0 has several eigenvectors.
	const c = 4 * states + 1;
	const shifted = L.map((row) => row.map((x) => x + c / states));
	const { values, vectors } = jacobiEigen(shifted);
	let drop = 0;
	for (let m = 1; m < states; m++) if (values[m] > values[drop]) drop = m;
	const modes: OccupancyModes = { states, vectors: [], perSwitch: [] };
	for (let m = 0; m < states; m++) {
		if (m === drop) continue;
		modes.vectors.push(vectors[m]);
		modes.perSwitch.push(meanDegree > 0 ? Math.max(0, values[m]) / (2 * meanDegree) : 0);
	}
	memo.set(key, modes);
	return modes;
}

export type OccupancyTest = {
	statistic: number;
	/** Modes with any information (n_m > 0). */
	dof: number;
	/** Effective independent samples per mode. */
	effective: number[];
	fractions: number[];
	/** (f_i − 1/K) / sd_i under equal occupancy, with sd from the same effective samples. */
	residuals: number[];
};

/**
 * The occupancy statistic of a horizon: counts per state (shots), switches and escapes seen.
 * Returns null when the horizon has no shots in phase states.
 */
export function occupancyStatistic(
	counts: readonly number[],
	switches: number,
	escapes: number,
	modes: OccupancyModes,
	withResiduals = false
): OccupancyTest | null {
	const sampled: SampledModes = { states: modes.states, vectors: modes.vectors, samples: modes.perSwitch.map((g) => switches * g) };
	return occupancyStatisticFromModes(counts, sampled, escapes, withResiduals);
}

/**
 * The modes of the switching graph that is really there: the relaxation modes of the reversible
 * jump process whose rates are estimated from the horizon's observed transitions, under the null
 * of equal occupancy.
 *
 * Under the null the stationary law is uniform (π_i = 1/K) and, the process being reversible,
 * the rates are symmetric: the maximum-likelihood estimate of q_ij = q_ji from n_ij + n_ji
 * switches over an exposure of T/K in each state is q_ij = K(n_ij + n_ji)/(2T). The asymptotic
 * covariance of the time fractions f of a continuous-time chain is
 *     T·Cov(f_i, f_j) → π_i Z_ij + π_j Z_ji,   Z = (A − Q)⁻¹ − A  (A = 1πᵀ, the limiting matrix),
 * the continuous-time form of Kemeny & Snell's fundamental-matrix result (Finite Markov Chains,
 * 1960, Thm 4.6.1, c_ij = a_i z_ij + a_j z_ji − a_i δ_ij − a_i a_j for a discrete chain). For a
 * symmetric Q = −L (L the weighted Laplacian) Z = Σ_m v_m v_mᵀ / ℓ_m over the non-constant
 * eigenvectors, so T·Cov(f) = (2/K) Σ_m v_m v_mᵀ / ℓ_m: along v_m the fractions vary as n_m =
 * ℓ_m T/2 independent samples would. With weights K(n_ij + n_ji)/(2T) the product ℓ_m T/2 is the
 * eigenvalue of the Laplacian with edge weights K(n_ij + n_ji)/4, so T cancels: n_m comes from
 * the switch counts alone. Two states with N switches give n = N, as for the unit graph; a 10:1
 * pair structure gives the slow cross-pair modes only the few samples their few switches carry.
 */
export function observedModes(states: number, transitions: ArrayLike<number>): SampledModes {
	const K = states;
	if (transitions.length !== K * K)
		throw new RangeError(`observedModes: transitions must have ${K * K} entries (K×K), got ${transitions.length}`);
	const L = Array.from({ length: K }, () => new Array<number>(K).fill(0));
	let maxDegree = 0;
	for (let i = 0; i < K; i++) {
		for (let j = i + 1; j < K; j++) {
			const w = (K * (transitions[i * K + j] + transitions[j * K + i])) / 4;
			if (!(w >= 0)) throw new RangeError(`observedModes: transition counts must be ≥ 0, got ${w} on ${i}↔${j}`);
			L[i][j] -= w;
			L[j][i] -= w;
			L[i][i] += w;
			L[j][j] += w;
		}
	}
	for (let i = 0; i < K; i++) maxDegree = Math.max(maxDegree, L[i][i]);
	const { vectors, values } = dropConstant(L, 2 * maxDegree + 1);
	return { states: K, vectors, samples: values.map((v) => Math.max(0, v)) };
}

/** Modes with the switch-driven samples each carries (n_m, before escapes and shot noise). */
export type SampledModes = { states: number; vectors: number[][]; samples: number[] };

/**
 * Eigenpairs of a Laplacian without its constant mode: adding c·11ᵀ/K (c above every eigenvalue,
 * which are ≤ 2·max degree by Gershgorin) moves the constant vector alone to c, so it can be
 * dropped even when the graph is disconnected and 0 has several eigenvectors.
 */
function dropConstant(L: number[][], c: number): { vectors: number[][]; values: number[] } {
	const K = L.length;
	const shifted = L.map((row) => row.map((x) => x + c / K));
	const eig = jacobiEigen(shifted);
	let drop = 0;
	for (let m = 1; m < K; m++) if (eig.values[m] > eig.values[drop]) drop = m;
	const vectors: number[][] = [];
	const values: number[] = [];
	for (let m = 0; m < K; m++) {
		if (m === drop) continue;
		vectors.push(eig.vectors[m]);
		values.push(eig.values[m]);
	}
	return { vectors, values };
}

/**
 * The occupancy statistic from modes with known switch-driven samples: each escape from vacuum
 * adds one independent episode to every mode, and shot noise adds 1/shots to each mode's variance.
 */
export function occupancyStatisticFromModes(
	counts: readonly number[],
	modes: SampledModes,
	escapes: number,
	withResiduals = false,
	studentize = false,
	minEpisodes = 0
): OccupancyTest | null {
	const K = modes.states;
	let shots = 0;
	for (let i = 0; i < K; i++) shots += counts[i];
	if (shots <= 0) return null;
	const fractions = new Array<number>(K);
	for (let i = 0; i < K; i++) fractions[i] = counts[i] / shots;
	const effective: number[] = [];
	let statistic = 0;
	let dof = 0;
	for (let m = 0; m < modes.vectors.length; m++) {
		const episodes = modes.samples[m] + escapes;
		// Below a tenth of an episode a mode carries no usable information (rounding residue of
		// the eigen-solver on a disconnected graph lands here too).
		const n = episodes >= minEpisodes && episodes > 0.1 ? 1 / (1 / episodes + 1 / shots) : 0;
		effective.push(n);
		if (n <= 0) continue;
		const v = modes.vectors[m];
		let proj = 0;
		for (let i = 0; i < K; i++) proj += v[i] * fractions[i];
		const z2 = n * K * proj * proj;
		statistic += studentize ? studentizedTerm(z2, episodes) : z2;
		dof += 1;
	}
	const residuals: number[] = [];
	if (withResiduals) {
		for (let i = 0; i < K; i++) {
			let variance = 0;
			for (let m = 0; m < modes.vectors.length; m++) {
				if (effective[m] > 0) variance += (modes.vectors[m][i] * modes.vectors[m][i]) / (effective[m] * K);
			}
			residuals.push(variance > 0 ? (fractions[i] - 1 / K) / Math.sqrt(variance) : 0);
		}
	}
	return { statistic, dof, effective, fractions, residuals };
}

/**
 * A mode's samples estimated from its own few switches make z² = n·K·(v·f)² heavier-tailed than
 * χ²₁ (at 0.21 switches/s and 10:1 pairs, 3 % of 300-window horizons fell below p = 0.001). Read
 * z as Student t with as many degrees of freedom as the mode has episodes, and map its two-sided
 * tail back to the χ²₁ value of the same tail, (Φ⁻¹(p/2))², so the sum over modes keeps a χ² law
 * with one degree of freedom per mode. The t tail is the incomplete-beta identity
 * P(|T_ν| ≥ t) = I_{ν/(ν+t²)}(ν/2, 1/2) (Abramowitz & Stegun 26.7.1), precise far into the tail.
 */
function studentizedTerm(z2: number, episodes: number): number {
	if (!(z2 > 0)) return 0;
	const nu = Math.max(1, episodes);
	const p = jStat.ibeta(nu / (nu + z2), nu / 2, 0.5);
	if (!(p > 0)) return Infinity;
	if (p >= 1) return 0;
	const q = jStat.normal.inv(p / 2, 0, 1);
	return q * q;
}

/** Upper-tail χ² probability (jstat's regularized incomplete gamma). */
export function chiSquareUpperTail(x: number, dof: number): number {
	if (dof <= 0) return 1;
	if (x <= 0) return 1;
	return Math.min(1, Math.max(0, 1 - jStat.chisquare.cdf(x, dof)));
}

/** P(X ≥ x) for X ~ Binomial(n, p) as I_p(x, n − x + 1) (the incomplete-beta identity). */
export function binomialUpperTail(x: number, n: number, p: number): number {
	if (x <= 0) return 1;
	if (x > n) return 0;
	if (p <= 0) return 0;
	return Math.min(1, Math.max(0, jStat.ibeta(p, x, n - x + 1)));
}
