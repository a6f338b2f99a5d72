// CUSUM charts: a Poisson CUSUM for a rate ratio on counts (Lucas 1985) and a tabular CUSUM for
// standardized continuous signals, each with its average run length and decision interval.
import jStat from 'jstat';
import { gaussLegendreOn } from './gauss-legendre';
import { solveLinearSystem } from './linear-system';
import { poissonUpperTail } from './poisson';
import { solveIncreasing } from './root';

function requireFinite(name: string, value: number): void {
	if (!Number.isFinite(value)) throw new RangeError(`${name} must be a finite number, got ${value}`);
}

function requirePositive(name: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0) {
		throw new RangeError(`${name} must be a finite number > 0, got ${value}`);
	}
}

function requireNonNegative(name: string, value: number): void {
	if (!Number.isFinite(value) || value < 0) {
		throw new RangeError(`${name} must be a finite number ≥ 0, got ${value}`);
	}
}

function requireRatio(name: string, rho: number): void {
	if (!Number.isFinite(rho) || rho <= 0 || rho === 1) {
		throw new RangeError(`${name} must be a finite rate ratio > 0 and ≠ 1, got ${rho}`);
	}
}

function requireTargetArl(targetArl: number): void {
	if (!Number.isFinite(targetArl) || targetArl <= 1) {
		throw new RangeError(`targetArl must be a finite run length > 1, got ${targetArl}`);
	}
}

/**
 * Finds the smallest x in (0, ∞) with f(x) ≥ target for a nondecreasing f, by doubling from
 * `start` and then bisecting to a relative width `relTol`.
 */
function bisectUp(f: (x: number) => number, target: number, start: number, relTol: number): number {
	let lo = 0;
	let hi = start;
	for (let i = 0; f(hi) < target; i++) {
		if (i > 60) throw new RangeError(`no decision interval reaches a run length of ${target}`);
		lo = hi;
		hi *= 2;
	}
	while (hi - lo > relTol * hi) {
		if (lo === 0 && hi < 1e-4 * start) {
			throw new RangeError(
				`every decision interval h > 0 already gives a run length of at least ${target}: ask for a longer target run length`
			);
		}
		const mid = (lo + hi) / 2;
		if (f(mid) >= target) hi = mid;
		else lo = mid;
	}
	return hi;
}

// ───────────────────────────── Poisson CUSUM ─────────────────────────────

/**
 * One step of a Poisson CUSUM for a rate ratio rho (Lucas 1985): the log-likelihood-ratio
 * increment of Poisson(rho·expected) against Poisson(expected) for this window's count,
 * count·ln rho − expected·(rho − 1), added to the state and clamped at 0.
 * rho > 1 watches for a rate increase, rho < 1 for a decrease; in both cases the statistic is
 * ≥ 0 and the chart signals when it reaches its decision interval h (state ≥ h).
 * `expected` is the in-control expected count of this window (rate × exposure), so windows of
 * different lengths or predicted rates combine correctly. Counts are assumed independent.
 */
export function poissonCusumStep(state: number, count: number, expected: number, rho: number): number {
	requireNonNegative('state', state);
	if (!Number.isInteger(count) || count < 0) {
		throw new RangeError(`count must be a non-negative integer, got ${count}`);
	}
	requireNonNegative('expected', expected);
	requireRatio('rho', rho);
	return Math.max(0, state + count * Math.log(rho) - expected * (rho - 1));
}

/** The two statistics of a two-sided Poisson CUSUM, both ≥ 0. */
export interface PoissonCusumPair {
	/** Statistic watching for a rate increase (ratio rhoUp > 1). */
	upper: number;
	/** Statistic watching for a rate decrease (ratio rhoDown < 1). */
	lower: number;
}

/** Design of a two-sided Poisson CUSUM. */
export interface TwoSidedPoissonCusumDesign {
	/** Rate ratio to detect upward, > 1. */
	rhoUp: number;
	/** Rate ratio to detect downward, in (0, 1). */
	rhoDown: number;
	/** Decision interval of the upper statistic. */
	hUp: number;
	/** Decision interval of the lower statistic. */
	hDown: number;
}

/** The new statistics of a two-sided Poisson CUSUM and whether each side signals. */
export interface TwoSidedPoissonCusumResult extends PoissonCusumPair {
	alarmUp: boolean;
	alarmDown: boolean;
}

function checkTwoSidedDesign(design: TwoSidedPoissonCusumDesign): void {
	if (!(design.rhoUp > 1) || !Number.isFinite(design.rhoUp)) {
		throw new RangeError(`rhoUp must be a finite ratio > 1, got ${design.rhoUp}`);
	}
	if (!(design.rhoDown > 0 && design.rhoDown < 1)) {
		throw new RangeError(`rhoDown must lie strictly between 0 and 1, got ${design.rhoDown}`);
	}
	requirePositive('hUp', design.hUp);
	requirePositive('hDown', design.hDown);
}

/**
 * One step of a two-sided Poisson CUSUM: both one-sided statistics advanced by
 * {@link poissonCusumStep}. The caller keeps the state (e.g. in a detector's store) and decides
 * whether to reset a side after it signals.
 */
export function poissonCusumTwoSidedStep(
	state: PoissonCusumPair,
	count: number,
	expected: number,
	design: TwoSidedPoissonCusumDesign
): TwoSidedPoissonCusumResult {
	checkTwoSidedDesign(design);
	const upper = poissonCusumStep(state.upper, count, expected, design.rhoUp);
	const lower = poissonCusumStep(state.lower, count, expected, design.rhoDown);
	return { upper, lower, alarmUp: upper >= design.hUp, alarmDown: lower >= design.hDown };
}

/** A two-sided Poisson CUSUM holding its own state; a side is reset to 0 after it signals. */
export class TwoSidedPoissonCusum {
	state: PoissonCusumPair = { upper: 0, lower: 0 };

	constructor(readonly design: TwoSidedPoissonCusumDesign) {
		checkTwoSidedDesign(design);
	}

	/** Feeds one window's count and in-control expected count; returns the step's result. */
	update(count: number, expected: number): TwoSidedPoissonCusumResult {
		const result = poissonCusumTwoSidedStep(this.state, count, expected, this.design);
		this.state = {
			upper: result.alarmUp ? 0 : result.upper,
			lower: result.alarmDown ? 0 : result.lower
		};
		return result;
	}

	reset(): void {
		this.state = { upper: 0, lower: 0 };
	}
}

/** Options of {@link poissonCusumArl}. */
export interface PoissonCusumArlOptions {
	/** Largest number of lattice states below h (default 600; the smallest used is a sixth of it). */
	maxStates?: number;
	/** Starting value of the statistic, in [0, h) (fast initial response); default 0. */
	headstart?: number;
}

/**
 * The lattice of the Poisson CUSUM chain: w = |ln rho|/m, so that a count moves the statistic by
 * exactly m steps; m is chosen where the drift |b|/w = m·|b|/|ln rho| is closest to an integer.
 */
function chooseLattice(h: number, a: number, b: number, maxStates: number): number {
	const r = Math.abs(b) / Math.abs(a);
	const mMin = Math.max(1, Math.ceil((Math.ceil(maxStates / 6) * Math.abs(a)) / h));
	const mMax = Math.min(mMin + 4000, Math.max(mMin, Math.floor((maxStates * Math.abs(a)) / h)));
	let best = mMin;
	let bestDist = Infinity;
	for (let m = mMin; m <= mMax; m++) {
		const x = m * r;
		const dist = Math.abs(x - Math.round(x));
		if (dist < bestDist - 1e-12) {
			best = m;
			bestDist = dist;
		}
	}
	return best;
}

/**
 * Average run length of a one-sided Poisson CUSUM ({@link poissonCusumStep}) with decision
 * interval h and design ratio rho, when every window has the same in-control expected count
 * muPerStep and the true rate is trueRatio times the in-control rate (1: the in-control ARL).
 *
 * Markov-chain method of Brook & Evans (1972). Discretisation: the statistic lives on the lattice
 * S = j·w, j = 0…N−1, N = ⌈h/w⌉, and S ≥ h is absorbing (the chart has signalled). The width is
 * w = |ln rho|/m, so a count k moves the statistic by exactly k·m lattice steps, as in Lucas's
 * integer-scaled CUSUMs. The drift b = muPerStep·(rho − 1) is B = b/w steps; m is chosen (N
 * between maxStates/6 and maxStates) to bring B as close to an integer as possible, and the
 * remaining fraction is handled by moving ⌊B⌋ or ⌊B⌋+1 steps with probabilities that keep the
 * mean drift exact. Moves below 0 land in state 0; a headstart is rounded to the nearest state.
 * When B is an integer the chain is exact; otherwise the error is a small fraction of a lattice
 * step per excursion, well under 1 % of the ARL against simulation. With constant expected
 * counts the ARL jumps at values of h the statistic can hit exactly (e.g. a whole number of
 * drift steps); at such an h the chain may fall on either side of the jump.
 * (I − R)·ARL = 1 is solved densely; an ARL that is infinite (no state can ever signal) is
 * returned as Infinity. Cost grows as N²·(|B| + 1), so a drift muPerStep·|rho − 1| much larger
 * than h is slow.
 */
export function poissonCusumArl(
	h: number,
	rho: number,
	muPerStep: number,
	trueRatio = 1,
	options: PoissonCusumArlOptions = {}
): number {
	requirePositive('h', h);
	requireRatio('rho', rho);
	requirePositive('muPerStep', muPerStep);
	requireNonNegative('trueRatio', trueRatio);
	const maxStates = options.maxStates ?? 600;
	if (!Number.isInteger(maxStates) || maxStates < 12 || maxStates > 3000) {
		throw new RangeError(`maxStates must be an integer between 12 and 3000, got ${maxStates}`);
	}
	const headstart = options.headstart ?? 0;
	if (!Number.isFinite(headstart) || headstart < 0 || headstart >= h) {
		throw new RangeError(`headstart must lie in [0, h), got ${headstart}`);
	}

	const a = Math.log(rho);
	const b = muPerStep * (rho - 1);
	const m = chooseLattice(h, a, b, maxStates);
	const w = Math.abs(a) / m;
	const n = Math.max(1, Math.ceil(h / w - 1e-9));
	if (n > maxStates) {
		throw new RangeError(
			`h/|ln rho| = ${(h / Math.abs(a)).toFixed(1)} needs more than maxStates = ${maxStates} lattice states`
		);
	}
	const stepPerCount = Math.sign(a) * m;
	const drift = b / w;
	const driftFloor = Math.floor(drift + 1e-9);
	const driftFrac = Math.max(0, drift - driftFloor);

	const mu = trueRatio * muPerStep;
	const kMax =
		stepPerCount > 0
			? Math.floor((n + driftFloor + 1) / m) + 1
			: Math.ceil((n - 1 - driftFloor) / m) + 1;
	const pmf = new Float64Array(kMax + 1);
	for (let k = 0; k <= kMax; k++) {
		pmf[k] = mu === 0 ? (k === 0 ? 1 : 0) : Math.exp(-mu + k * Math.log(mu) - jStat.gammaln(k + 1));
	}

	// M = I − R, row-major.
	const M = new Float64Array(n * n);
	for (let j = 0; j < n; j++) M[j * n + j] = 1;
	const addTransition = (from: number, to: number, p: number) => {
		if (p > 0 && to < n) M[from * n + Math.max(0, to)] -= p;
	};
	for (let j = 0; j < n; j++) {
		for (let k = 0; k <= kMax; k++) {
			const t = j + k * stepPerCount - driftFloor;
			if (stepPerCount > 0 && t - 1 >= n) break;
			if (stepPerCount < 0 && t <= 0) {
				addTransition(j, 0, mu === 0 ? (k === 0 ? 1 : 0) : poissonUpperTail(k, mu));
				break;
			}
			addTransition(j, t, pmf[k] * (1 - driftFrac));
			addTransition(j, t - 1, pmf[k] * driftFrac);
		}
	}
	const arl = solveLinearSystem(M, new Float64Array(n).fill(1), n);
	if (!arl) return Infinity;
	const start = Math.min(n - 1, Math.round(headstart / w));
	return arl[start];
}

/**
 * The decision interval h of a one-sided Poisson CUSUM whose in-control ARL (every window with
 * expected count muPerStep) reaches targetArl: the smallest such h found by bisection on
 * {@link poissonCusumArl} to a relative width of 1e-4. Because counts are discrete, the ARL is a
 * step function of h; the h returned is at or just above the step that reaches the target.
 */
export function poissonCusumDecisionInterval(
	targetArl: number,
	rho: number,
	muPerStep: number,
	options: Pick<PoissonCusumArlOptions, 'maxStates'> = {}
): number {
	requireTargetArl(targetArl);
	requireRatio('rho', rho);
	requirePositive('muPerStep', muPerStep);
	const start = Math.max(Math.abs(Math.log(rho)), muPerStep * Math.abs(rho - 1));
	return bisectUp((h) => poissonCusumArl(h, rho, muPerStep, 1, options), targetArl, start, 1e-4);
}

// ───────────────────────────── Normal CUSUM ─────────────────────────────

/** The two statistics of a tabular CUSUM, both ≥ 0. */
export interface NormalCusumState {
	/** C⁺: accumulates standardized values above +k. */
	upper: number;
	/** C⁻: accumulates standardized values below −k. */
	lower: number;
}

/**
 * One step of the tabular CUSUM for a standardized observation z = (x − target)/σ with
 * reference value k (in σ units; k = δ/2 detects a mean shift δ best):
 * C⁺ ← max(0, C⁺ + z − k), C⁻ ← max(0, C⁻ − z − k). The chart signals when either reaches h.
 */
export function normalCusumStep(state: NormalCusumState, z: number, k: number): NormalCusumState {
	requireNonNegative('state.upper', state.upper);
	requireNonNegative('state.lower', state.lower);
	requireFinite('z', z);
	requireNonNegative('k', k);
	return {
		upper: Math.max(0, state.upper + z - k),
		lower: Math.max(0, state.lower - z - k)
	};
}

/** Parameters of {@link normalCusumArl}. */
export interface NormalCusumArlParams {
	/** Reference value, in σ units. */
	k: number;
	/** Decision interval, in σ units. */
	h: number;
	/** True mean shift in σ units (default 0: in control). */
	shift?: number;
	/** Both sides (default true) or the upper side alone. */
	twoSided?: boolean;
	/** Starting value of the upper statistic in [0, h); one-sided charts only. Default 0. */
	headstart?: number;
	/** Gauss–Legendre points on [0, h] (default grows with h). */
	nodes?: number;
}

/**
 * ARL of the upper CUSUM from start s: solves the integral equation (Page 1954)
 * L(u) = 1 + L(0)·Φ(k − δ − u) + ∫₀ʰ L(y) φ(y − u + k − δ) dy
 * by the Nyström method with Gauss–Legendre points (L(0) carried as its own unknown), then
 * evaluates L(s) with the same quadrature.
 */
function upperCusumArl(k: number, h: number, delta: number, s: number, nodes: number): number {
	const { nodes: y, weights: wq } = gaussLegendreOn(nodes, 0, h);
	const size = nodes + 1;
	const c = k - delta;
	const phi = (x: number) => Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
	const Phi = (x: number) => jStat.normal.cdf(x, 0, 1);
	const M = new Float64Array(size * size);
	const point = (i: number) => (i === 0 ? 0 : y[i - 1]);
	for (let i = 0; i < size; i++) {
		const u = point(i);
		M[i * size + 0] -= Phi(c - u);
		for (let j = 1; j < size; j++) M[i * size + j] -= wq[j - 1] * phi(y[j - 1] - u + c);
		M[i * size + i] += 1;
	}
	const L = solveLinearSystem(M, new Float64Array(size).fill(1), size);
	if (!L) return Infinity;
	if (s === 0) return L[0];
	let value = 1 + L[0] * Phi(c - s);
	for (let j = 1; j < size; j++) value += wq[j - 1] * phi(y[j - 1] - s + c) * L[j];
	return value;
}

/**
 * Average run length of the tabular CUSUM ({@link normalCusumStep}) on independent N(shift, 1)
 * observations. Each side's ARL comes from the integral equation (Nyström method, Gauss–Legendre
 * quadrature; accurate to far better than 0.1 % with the default points). The two-sided ARL is
 * combined from the one-sided ones by 1/ARL = 1/ARL⁺ + 1/ARL⁻ (Lucas & Crosier 1982), with ARL⁻
 * the upper ARL at −shift; that relation is stated for the zero start, so a headstart is
 * accepted for the one-sided chart only.
 */
export function normalCusumArl(params: NormalCusumArlParams): number {
	const { k, h } = params;
	const shift = params.shift ?? 0;
	const twoSided = params.twoSided ?? true;
	const headstart = params.headstart ?? 0;
	requireNonNegative('k', k);
	requirePositive('h', h);
	requireFinite('shift', shift);
	if (!Number.isFinite(headstart) || headstart < 0 || headstart >= h) {
		throw new RangeError(`headstart must lie in [0, h), got ${headstart}`);
	}
	if (twoSided && headstart > 0) {
		throw new RangeError('headstart is supported for the one-sided chart only (twoSided: false)');
	}
	const nodes = params.nodes ?? Math.min(400, Math.max(40, Math.ceil(12 * h) + 16));
	if (!Number.isInteger(nodes) || nodes < 4) {
		throw new RangeError(`nodes must be an integer ≥ 4, got ${nodes}`);
	}
	const up = upperCusumArl(k, h, shift, headstart, nodes);
	if (!twoSided) return up;
	const down = upperCusumArl(k, h, -shift, 0, nodes);
	return 1 / (1 / up + 1 / down);
}

/**
 * The decision interval h of a tabular CUSUM with reference value k whose in-control ARL equals
 * targetArl (two-sided unless `twoSided: false`), found by false position on ln ARL
 * ({@link normalCusumArl}) to a relative width of 1e-8.
 */
export function normalCusumDecisionInterval(
	targetArl: number,
	k: number,
	options: { twoSided?: boolean } = {}
): number {
	requireTargetArl(targetArl);
	requireNonNegative('k', k);
	const twoSided = options.twoSided ?? true;
	const arl = (h: number) => normalCusumArl({ k, h, shift: 0, twoSided });
	return solveIncreasing(arl, targetArl, 4, 1e-8, 'decision interval h');
}
