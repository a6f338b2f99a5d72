// Exact Poisson statistics: confidence limits, tail probabilities, count thresholds, and the
// comparison of two Poisson rates.
import jStat from 'jstat';

function requireCount(name: string, value: number): void {
	if (!Number.isInteger(value) || value < 0) {
		throw new RangeError(`${name} must be a non-negative integer count, got ${value}`);
	}
}

function requireInteger(name: string, value: number): void {
	if (!Number.isInteger(value)) {
		throw new RangeError(`${name} must be an integer, got ${value}`);
	}
}

function requireMean(name: string, value: number): void {
	if (!Number.isFinite(value) || value < 0) {
		throw new RangeError(`${name} must be a finite number ≥ 0, got ${value}`);
	}
}

function requirePositive(name: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0) {
		throw new RangeError(`${name} must be a finite number > 0, got ${value}`);
	}
}

function requireProbability(name: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0 || value >= 1) {
		throw new RangeError(`${name} must lie strictly between 0 and 1, got ${value}`);
	}
}

/** Confidence limits on the mean of a Poisson count (multiply by 1/exposure for a rate). */
export interface PoissonLimits {
	lower: number;
	upper: number;
}

/**
 * Exact two-sided confidence interval for the mean μ of a Poisson count (Garwood 1936):
 * lower = χ²(α/2; 2n)/2, upper = χ²(1−α/2; 2n+2)/2 with α = 1 − confidence; lower = 0 at n = 0.
 * "Exact" means coverage ≥ confidence for every μ (each tail holds at most α/2). The quantiles
 * come from jstat (relative accuracy about 1e-8). Divide by the exposure to get a rate interval.
 */
export function poissonInterval(count: number, confidence = 0.95): PoissonLimits {
	requireCount('count', count);
	requireProbability('confidence', confidence);
	const alpha = 1 - confidence;
	const lower = count === 0 ? 0 : jStat.chisquare.inv(alpha / 2, 2 * count) / 2;
	const upper = jStat.chisquare.inv(1 - alpha / 2, 2 * count + 2) / 2;
	return { lower, upper };
}

/**
 * Exact one-sided upper confidence limit for a Poisson mean: χ²(confidence; 2n+2)/2, i.e. the μ
 * with P(K ≤ n | μ) = 1 − confidence. At n = 0 this is −ln(1 − confidence) (2.9957 at 95 %).
 */
export function poissonUpperLimitOneSided(count: number, confidence = 0.95): number {
	requireCount('count', count);
	requireProbability('confidence', confidence);
	return jStat.chisquare.inv(confidence, 2 * count + 2) / 2;
}

/** ln P(K = k) for K ~ Poisson(mu), mu > 0. */
function logPmf(k: number, mu: number): number {
	return -mu + k * Math.log(mu) - jStat.gammaln(k + 1);
}

/**
 * P(K ≥ k) for K ~ Poisson(mu), as the regularized lower incomplete gamma function P(k, mu)
 * (jstat's lowRegGamma). Where this tail is small (mu < k) jstat evaluates P(k, mu) by its power
 * series, which keeps about 1e-10 relative accuracy down to tails far below 1e-12.
 * k ≤ 0 gives 1; mu = 0 gives 0 for k ≥ 1.
 */
export function poissonUpperTail(k: number, mu: number): number {
	requireInteger('k', k);
	requireMean('mu', mu);
	if (k <= 0) return 1;
	if (mu === 0) return 0;
	const p = jStat.lowRegGamma(k, mu);
	return Math.min(1, Math.max(0, p));
}

/**
 * P(K ≤ k) for K ~ Poisson(mu). Where this tail is not small it is 1 − P(K ≥ k+1); where it is
 * small (mu well above k, so the subtraction would cancel) it is summed term by term downward
 * from k, in log space, which keeps full relative accuracy for tiny tails.
 * k < 0 gives 0; mu = 0 gives 1 for k ≥ 0.
 */
export function poissonLowerTail(k: number, mu: number): number {
	requireInteger('k', k);
	requireMean('mu', mu);
	if (k < 0) return 0;
	if (mu === 0) return 1;
	const viaUpper = 1 - poissonUpperTail(k + 1, mu);
	// Above 1e-3 the subtraction loses at most ~1e-13 relative; below, sum directly.
	if (viaUpper > 1e-3) return viaUpper;
	let term = Math.exp(logPmf(k, mu));
	let sum = 0;
	for (let j = k; j >= 0; j--) {
		sum += term;
		term *= j / mu;
		if (term <= sum * 1e-17) break;
	}
	return Math.min(1, sum);
}

/**
 * The smallest integer k with P(K ≥ k) ≤ alpha for K ~ Poisson(mu): the count at which a
 * window with expected count mu raises an alarm when the false-alarm probability per window
 * may be at most alpha. alpha ≥ 1 gives 0; mu = 0 gives 1.
 */
export function poissonThresholdForTail(mu: number, alpha: number): number {
	requireMean('mu', mu);
	if (!Number.isFinite(alpha) || alpha <= 0) {
		throw new RangeError(`alpha must be a finite probability > 0, got ${alpha}`);
	}
	if (alpha >= 1) return 0;
	if (mu === 0) return 1;
	// Invariant: tail(lo) > alpha, tail(hi) ≤ alpha; tail(0) = 1 > alpha.
	let lo = 0;
	let hi = Math.max(1, Math.ceil(mu + 10 * Math.sqrt(mu) + 10));
	while (poissonUpperTail(hi, mu) > alpha) {
		lo = hi;
		hi *= 2;
	}
	while (hi - lo > 1) {
		const mid = Math.floor((lo + hi) / 2);
		if (poissonUpperTail(mid, mu) > alpha) lo = mid;
		else hi = mid;
	}
	return hi;
}

/**
 * P(X ≤ x) for X ~ Binomial(n, p) as I_{1−p}(n − x, x + 1). jstat's binomial.cdf rounds its
 * result to 1e-10, which would flatten small p-values; the incomplete beta keeps ~1e-8 relative.
 */
function binomialLowerTail(x: number, n: number, p: number): number {
	if (x >= n) return 1;
	return Math.min(1, Math.max(0, jStat.ibeta(1 - p, n - x, x + 1)));
}

/** Result of comparing two Poisson rates. */
export interface RateRatioResult {
	/** Estimated ratio of rate 1 to rate 2: (x1/t1)/(x2/t2); Infinity when x2 = 0. */
	ratio: number;
	/** Exact lower confidence limit on the ratio. */
	lower: number;
	/** Exact upper confidence limit on the ratio; Infinity when x2 = 0. */
	upper: number;
	/** Two-sided exact p-value for equal rates: twice the smaller binomial tail, capped at 1. */
	pValue: number;
}

/**
 * Compares the rates of two Poisson processes from counts x1, x2 over exposures t1, t2 (any
 * common unit) by the conditional binomial test (Przyborowski & Wilenski 1940): given
 * n = x1 + x2, x1 ~ Binomial(n, p) with p = ρ t1/(ρ t1 + t2), where ρ is the rate ratio.
 *
 * pValue tests ρ = 1 (p0 = t1/(t1+t2)) two-sided by the central convention: twice the smaller
 * of P(X ≤ x1) and P(X ≥ x1), capped at 1. With this convention the interval excludes 1
 * exactly when pValue < 1 − confidence, because the interval inverts the same two tails.
 *
 * The interval on ρ is the exact Clopper–Pearson interval of p (beta quantiles), mapped by
 * ρ = (p/(1−p))·(t2/t1). It needs n ≥ 1: with no events at all the ratio is undetermined.
 * Tail probabilities and quantiles come from jstat's incomplete beta (about 1e-8 relative).
 */
export function rateRatioTest(x1: number, t1: number, x2: number, t2: number, confidence = 0.95): RateRatioResult {
	requireCount('x1', x1);
	requireCount('x2', x2);
	requirePositive('t1', t1);
	requirePositive('t2', t2);
	requireProbability('confidence', confidence);
	const n = x1 + x2;
	if (n === 0) {
		throw new RangeError('x1 + x2 must be at least 1: with no events the rate ratio is undetermined');
	}
	const alpha = 1 - confidence;
	const p0 = t1 / (t1 + t2);
	const tailBelow = binomialLowerTail(x1, n, p0);
	const tailAbove = binomialLowerTail(n - x1, n, 1 - p0);
	const pValue = Math.min(1, 2 * Math.min(tailBelow, tailAbove));

	const pLower = x1 === 0 ? 0 : jStat.beta.inv(alpha / 2, x1, n - x1 + 1);
	const pUpper = x1 === n ? 1 : jStat.beta.inv(1 - alpha / 2, x1 + 1, n - x1);
	const toRatio = (p: number) => (p >= 1 ? Infinity : (p / (1 - p)) * (t2 / t1));
	const ratio = x2 === 0 ? Infinity : x1 / t1 / (x2 / t2);
	return { ratio, lower: toRatio(pLower), upper: toRatio(pUpper), pValue };
}
