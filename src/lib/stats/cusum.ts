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
	/** Starting value of the statistic, in [0, h) (fast initial response); default 0. */
	headstart?: number;
}

/** Where a cycle of the chain ended: mean length, and the chance it ended by signalling. */
interface CycleOutcome {
	meanSteps: number;
	pSignal: number;
	pReturn: number;
}

/** Comparisons with h and with 0 are made this far inside, so that a value on them exactly counts as reaching them. */
const TIE_COUNTS = 1e-9;
/** A cycle is followed until the mass still inside (0, h) is this small a fraction of what it has yet to decide. */
const CYCLE_TOLERANCE = 1e-12;
/** Steps of one cycle beyond which the run length is refused rather than guessed. */
const MAX_CYCLE_STEPS = 5_000_000;

/**
 * Follows one cycle of the chart in count units (T = S/|ln ρ|) from T = start until it signals
 * (T ≥ H) or returns to 0. The upward chart moves T ← T + K − k, the downward one T ← T − K + k,
 * with k = μ(ρ − 1)/ln ρ > 0; after j steps with i counts the statistic is start ± (i − j·k)
 * exactly, so the distribution over i at each j is the exact state of the Markov chain.
 */
function followCycle(start: number, H: number, k: number, mu: number, upward: boolean): CycleOutcome {
	const xMax = Math.ceil(k + H) + 2;
	const pmf = new Float64Array(xMax + 1);
	for (let x = 0; x <= xMax; x++) pmf[x] = Math.exp(-mu + x * Math.log(mu) - jStat.gammaln(x + 1));
	// upward: tail[x] = P(K ≥ x); downward: head[x] = P(K ≤ x). Both summed from their small end.
	const cumulative = new Float64Array(xMax + 2);
	if (upward) {
		cumulative[xMax + 1] = poissonUpperTail(xMax + 1, mu);
		for (let x = xMax; x >= 0; x--) cumulative[x] = cumulative[x + 1] + pmf[x];
	} else {
		let sum = 0;
		for (let x = 0; x <= xMax; x++) cumulative[x] = sum += pmf[x];
	}

	// Alive counts i at step j: upward 0 < start + i − j·k < H; downward 0 < start + j·k − i < H.
	const liveRange = (j: number): [number, number] => {
		const x = j * k - start;
		if (upward) return [Math.floor(x + TIE_COUNTS) + 1, Math.ceil(x + H - TIE_COUNTS) - 1];
		const y = start + j * k;
		return [Math.floor(y - H + TIE_COUNTS) + 1, Math.ceil(y - TIE_COUNTS) - 1];
	};
	let lo = 0;
	let mass = new Float64Array([1]);
	let alive = 1;
	let meanSteps = 0;
	let pSignal = 0;
	for (let j = 0; ; j++) {
		if (j >= MAX_CYCLE_STEPS) {
			throw new RangeError(
				`the Poisson CUSUM's run length did not settle within ${MAX_CYCLE_STEPS} steps of one cycle (h = ${H} counts, k = ${k})`
			);
		}
		meanSteps += alive;
		const [nextLo, nextHi] = liveRange(j + 1);
		const next = new Float64Array(Math.max(0, nextHi - nextLo + 1));
		const reach = upward ? (j + 1) * k - start + H : start + (j + 1) * k - H;
		for (let n = 0; n < mass.length; n++) {
			const m = mass[n];
			if (m === 0) continue;
			const i = lo + n;
			if (upward) {
				const xSignal = Math.max(0, Math.ceil(reach - TIE_COUNTS - i));
				pSignal += m * (xSignal > xMax + 1 ? 0 : cumulative[xSignal]);
				for (let x = Math.max(0, nextLo - i); x < xSignal; x++) next[i + x - nextLo] += m * pmf[x];
			} else {
				const xSignal = Math.floor(reach + TIE_COUNTS - i);
				if (xSignal >= 0) pSignal += m * cumulative[Math.min(xSignal, xMax)];
				for (let x = Math.max(0, xSignal + 1); x <= nextHi - i; x++) next[i + x - nextLo] += m * pmf[x];
			}
		}
		let nextAlive = 0;
		for (let n = 0; n < next.length; n++) nextAlive += next[n];
		const shrink = nextAlive / alive;
		lo = nextLo;
		mass = next;
		const previous = alive;
		alive = nextAlive;
		if (alive === 0) break;
		// Stop when what is still inside can change neither the chance of signalling nor the
		// mean length (a geometric tail at the current rate of decay) by more than the tolerance.
		if (shrink < 1 && alive <= CYCLE_TOLERANCE * pSignal && alive / (1 - shrink) <= CYCLE_TOLERANCE * (meanSteps + previous)) {
			meanSteps += alive / (1 - shrink);
			break;
		}
	}
	return { meanSteps, pSignal, pReturn: Math.max(0, 1 - pSignal - alive) };
}

/**
 * Average run length of a one-sided Poisson CUSUM ({@link poissonCusumStep}) with decision
 * interval h and design ratio rho, when every window has the same in-control expected count
 * muPerStep and the true rate is trueRatio times the in-control rate (1: the in-control ARL).
 *
 * The Markov chain of the statistic (Brook & Evans 1972) on its exact states, with no lattice.
 * In count units T = S/|ln ρ| a step adds (upward chart) K − k or (downward) k − K, k =
 * μ(ρ − 1)/ln ρ, and the statistic returns to 0 whenever it would fall to or below it. From 0 the
 * chain regenerates: after j steps and i counts since it last left 0 the statistic is exactly
 * ±(i − j·k), so the chain's distribution over a cycle is a distribution over the count i at each
 * step j, followed here step by step until the chart signals or returns to 0 (the mass still inside
 * shrinks geometrically; it is followed to a relative 1e-12). By renewal,
 * ARL(0) = E[cycle length] / P(cycle signals), and from a headstart s,
 * ARL(s) = E[first cycle's length] + P(it returns to 0)·ARL(0).
 * This is exact for any real k — no rounding of the drift to a lattice (Lucas 1985 scaled k to a
 * rational with a small denominator; the lattice chain this replaced, with 300 states, was 1–3 %
 * long against simulation). Cost per step is about (h/|ln ρ|)², independent of the ARL itself.
 * A value exactly at h counts as reaching it (within 1e-9 counts), as in the chart. With
 * constant expected counts the ARL is a step function of h, jumping where h equals a value the
 * statistic can take. An ARL that is infinite (no count can ever signal) is returned as Infinity.
 */
export function poissonCusumArl(h: number, rho: number, muPerStep: number, trueRatio = 1, options: PoissonCusumArlOptions = {}): number {
	requirePositive('h', h);
	requireRatio('rho', rho);
	requirePositive('muPerStep', muPerStep);
	requireNonNegative('trueRatio', trueRatio);
	const headstart = options.headstart ?? 0;
	if (!Number.isFinite(headstart) || headstart < 0 || headstart >= h) {
		throw new RangeError(`headstart must lie in [0, h), got ${headstart}`);
	}
	const a = Math.log(rho);
	const upward = a > 0;
	const H = h / Math.abs(a);
	const k = (muPerStep * (rho - 1)) / a;
	const start = headstart / Math.abs(a);
	const mu = trueRatio * muPerStep;
	if (mu === 0) {
		// No counts ever: the upward chart never rises; the downward one climbs k per step.
		return upward ? Infinity : Math.max(1, Math.ceil((H - start - TIE_COUNTS) / k));
	}
	const fromZero = followCycle(0, H, k, mu, upward);
	const arlFromZero = fromZero.pSignal > 0 ? fromZero.meanSteps / fromZero.pSignal : Infinity;
	if (start === 0) return arlFromZero;
	const first = followCycle(start, H, k, mu, upward);
	return first.meanSteps + (first.pReturn > 0 ? first.pReturn * arlFromZero : 0);
}

/**
 * The decision interval h of a one-sided Poisson CUSUM whose in-control ARL (every window with
 * expected count muPerStep) reaches targetArl: the smallest such h found by bisection on
 * {@link poissonCusumArl} to a relative width of 1e-4. Because counts are discrete, the ARL is a
 * step function of h; the h returned is at or just above the step that reaches the target.
 */
export function poissonCusumDecisionInterval(targetArl: number, rho: number, muPerStep: number): number {
	requireTargetArl(targetArl);
	requireRatio('rho', rho);
	requirePositive('muPerStep', muPerStep);
	const start = Math.max(Math.abs(Math.log(rho)), muPerStep * Math.abs(rho - 1));
	return solveIncreasing((h) => poissonCusumArl(h, rho, muPerStep, 1), targetArl, start, 1e-4, 'decision interval h', 'bisection');
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
export function normalCusumDecisionInterval(targetArl: number, k: number, options: { twoSided?: boolean } = {}): number {
	requireTargetArl(targetArl);
	requireNonNegative('k', k);
	const twoSided = options.twoSided ?? true;
	const arl = (h: number) => normalCusumArl({ k, h, shift: 0, twoSided });
	return solveIncreasing(arl, targetArl, 4, 1e-8, 'decision interval h');
}
