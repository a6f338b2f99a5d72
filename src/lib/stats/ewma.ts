// EWMA chart for a standardized continuous signal: step, control limits, run length and the
// limit width for a target in-control run length.
import jStat from 'jstat';
import { solveLinearSystem } from './linear-system';
import { solveIncreasing } from './root';

function requireLambda(lambda: number): void {
	if (!Number.isFinite(lambda) || lambda <= 0 || lambda > 1) {
		throw new RangeError(`lambda must lie in (0, 1], got ${lambda}`);
	}
}

function requirePositive(name: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0) {
		throw new RangeError(`${name} must be a finite number > 0, got ${value}`);
	}
}

/**
 * One EWMA step: Z ← (1 − λ)·Z + λ·x. For a standardized signal start at Z₀ = 0 (the in-control
 * mean).
 */
export function ewmaStep(prev: number, x: number, lambda: number): number {
	requireLambda(lambda);
	if (!Number.isFinite(prev)) throw new RangeError(`prev must be a finite number, got ${prev}`);
	if (!Number.isFinite(x)) throw new RangeError(`x must be a finite number, got ${x}`);
	return (1 - lambda) * prev + lambda * x;
}

/** Options of {@link ewmaLimits}. */
export interface EwmaLimitOptions {
	/** Use the steady-state width (default true). */
	asymptotic?: boolean;
	/** With asymptotic: false, the number of observations so far (t ≥ 1). */
	step?: number;
}

/**
 * Control limits ±L·σ_Z of an EWMA of independent standardized observations (mean 0, σ = 1):
 * σ_Z = √(λ/(2−λ)) asymptotically, or √(λ/(2−λ)·(1 − (1−λ)^{2t})) after t observations from
 * Z₀ = 0 (the exact variance, narrower at the start).
 */
export function ewmaLimits(lambda: number, L: number, options: EwmaLimitOptions = {}): { lower: number; upper: number } {
	requireLambda(lambda);
	requirePositive('L', L);
	const asymptotic = options.asymptotic ?? true;
	let variance = lambda / (2 - lambda);
	if (!asymptotic) {
		const t = options.step;
		if (t === undefined || !Number.isInteger(t) || t < 1) {
			throw new RangeError(`step must be an integer ≥ 1 when asymptotic is false, got ${t}`);
		}
		variance *= 1 - Math.pow(1 - lambda, 2 * t);
	}
	const half = L * Math.sqrt(variance);
	return { lower: -half, upper: half };
}

/** Parameters of {@link ewmaArl}. */
export interface EwmaArlParams {
	lambda: number;
	/** Limit width in units of the asymptotic σ_Z. */
	L: number;
	/** True mean shift in σ units (default 0). */
	shift?: number;
	/** Number of Markov-chain states across the in-control band; odd (default 301). */
	states?: number;
}

/**
 * Average run length of the two-sided EWMA chart with asymptotic limits ±L·σ_Z, on independent
 * N(shift, 1) observations, starting from Z₀ = 0.
 *
 * Markov-chain method (Brook & Evans 1972, as used by Lucas & Saccucci 1990): the band
 * (−c, c), c = L·√(λ/(2−λ)), is cut into N equal cells of width w = 2c/N (N odd, so 0 is the
 * midpoint of the central cell); from the midpoint m_i of cell i the chain moves to cell j with
 * probability Φ((m_j + w/2 − (1−λ)m_i)/λ − shift) − Φ((m_j − w/2 − (1−λ)m_i)/λ − shift); leaving
 * the band is absorption. The discretisation error falls as 1/N²: about 0.1 % at the default N.
 */
export function ewmaArl(params: EwmaArlParams): number {
	const { lambda, L } = params;
	const shift = params.shift ?? 0;
	const n = params.states ?? 301;
	requireLambda(lambda);
	requirePositive('L', L);
	if (!Number.isFinite(shift)) throw new RangeError(`shift must be a finite number, got ${shift}`);
	if (!Number.isInteger(n) || n < 11 || n % 2 === 0 || n > 2001) {
		throw new RangeError(`states must be an odd integer between 11 and 2001, got ${n}`);
	}
	const c = L * Math.sqrt(lambda / (2 - lambda));
	const w = (2 * c) / n;
	const M = new Float64Array(n * n);
	const cdf = new Float64Array(n + 1);
	for (let i = 0; i < n; i++) {
		const from = (1 - lambda) * (-c + (i + 0.5) * w);
		for (let e = 0; e <= n; e++) cdf[e] = jStat.normal.cdf((-c + e * w - from) / lambda - shift, 0, 1);
		for (let j = 0; j < n; j++) M[i * n + j] = -(cdf[j + 1] - cdf[j]);
		M[i * n + i] += 1;
	}
	const arl = solveLinearSystem(M, new Float64Array(n).fill(1), n);
	if (!arl) return Infinity;
	return arl[(n - 1) / 2];
}

/**
 * The limit width L of a two-sided EWMA chart with smoothing lambda whose in-control ARL
 * ({@link ewmaArl}) equals targetArl, found by false position on ln ARL to a relative width
 * of 1e-7.
 */
export function ewmaLimitForArl(targetArl: number, lambda: number, options: { states?: number } = {}): number {
	if (!Number.isFinite(targetArl) || targetArl <= 1) {
		throw new RangeError(`targetArl must be a finite run length > 1, got ${targetArl}`);
	}
	requireLambda(lambda);
	const arl = (L: number) => ewmaArl({ lambda, L, shift: 0, states: options.states });
	return solveIncreasing(arl, targetArl, 2.5, 1e-7, 'limit width L');
}
