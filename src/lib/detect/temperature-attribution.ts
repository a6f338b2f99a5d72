// Whether the measured fridge temperature accounts for a rate excess, decided by a fit rather
// than by a non-significance.
//
// Method: a Poisson generalised linear model with log link, fitted by iteratively reweighted least
// squares (Newton–Raphson on the log-likelihood, which for the canonical log link is the same as
// Fisher scoring), with Wald intervals from the inverse Fisher information at the maximum — as in
// McCullagh & Nelder, Generalized Linear Models (2nd ed. 1989), ch. 2 and 6; written from memory.
// Each window i has count y_i ~ Poisson(μ_i) with
//     ln μ_i = ln E_i + α + β·(x_i − x_nom),   x = 1/(2n̄(f,T)+1),
// E_i the count predicted at the nominal temperature, x_nom the temperature term there. The
// activation law ln W = ln W0 − A·s·x makes β the measured −A·s, whatever the model's A: the fit
// tests the temperature, not the model's law. e^α, the residual constant, is the rate factor at
// the nominal temperature that no temperature change accounts for. Counts per window are small,
// so the fit uses the Poisson likelihood, not least squares on log ratios (ln 0 is undefined and
// small-count log ratios are biased). The windows are the span of the excess and the ones before
// it (which anchor α where the rate still agreed).
//
// The temperature's share is the part of the chart's log excess over the span, L, that the
// measured temperature term carries beyond what the chart's prediction already holds:
// (β + A·s)·d̄ / L when the chart follows the temperature with the model's law, β·d̄ / L when it
// compares with the nominal rate; d̄ is the mean of x − x_nom over the span weighted by E. Its
// interval is β's Wald interval carried through (L taken as observed).
//
// Hand-written because no well-known npm package fits a Poisson GLM with an offset; with two
// coefficients Newton's method is a few lines.
//
// The verdict (true = explained by temperature, false = not, null = cannot tell):
//   - the temperature barely moved (its term's spread moves the modelled rate, by the model's A,
//     by less than minLogSpread): it cannot account for a change. At the nominal point: false when
//     the span's rate differs significantly from the nominal prediction. Elsewhere: false when the
//     rate stepped significantly at the span's start after agreeing with the chart's prediction
//     before it (the step's Fisher variance is 1/Σy_span + 1/Σy_before), else null (a wrong
//     temperature law and a constant factor fit equally well);
//   - otherwise the fit: false when the residual constant's interval excludes 1, or the share's
//     interval lies below largeShare; true when the share's interval excludes 0, the share is at
//     least largeShare, and the residual's interval contains 1 but excludes the constant that
//     would explain the whole excess the chart saw (so it is measured, not merely imprecise);
//     else null.
import jStat from 'jstat';
import { solveLinearSystem } from '../stats/linear-system';

export type AttributionWindow = {
	/** Events counted in the window. */
	count: number;
	/** Count predicted at the nominal temperature (the offset). */
	expectedNominal: number;
	/** Temperature term 1/(2n̄+1) at the window's measured temperature. */
	x: number;
	/** Whether the window is in the span of the excess (the share is reported over these). */
	inSpan: boolean;
};

export type AttributionInput = {
	windows: readonly AttributionWindow[];
	/** Temperature term at the nominal temperature. */
	x_nominal: number;
	/**
	 * The model's activation exponent A·s (≥ 0): only a yardstick that turns the spread of x into
	 * a spread of the modelled log rate. 0 (a temperature-independent model) uses 1.
	 */
	modelSlope: number;
	/**
	 * ln(observed/predicted) over the span against the chart's prediction: the constant factor that
	 * would explain the excess without any temperature. The residual must be told apart from it.
	 */
	chartLogExcess: number;
	/**
	 * Whether the chart's prediction already follows the measured temperature with the model's
	 * law: the temperature's share of the chart's excess is then what the measured slope adds
	 * beyond the model's.
	 */
	chartFollowsTemperature: boolean;
	/** Two-sided confidence of the intervals, in (0, 1). */
	confidence: number;
	/** Modelled log-rate change below which the temperature counts as not having moved. */
	minLogSpread?: number;
	/** Share of the log excess the temperature term must carry to be "the" explanation. */
	largeShare?: number;
};

export type AttributionReason =
	| 'no_temperature'
	| 'no_counts'
	| 'no_fit'
	| 'temperature_at_nominal'
	| 'temperature_steady'
	| 'changed_at_steady_temperature'
	| 'temperature_carries_it'
	| 'residual_constant'
	| 'temperature_share_small'
	| 'intervals_too_wide';

export type Interval = [number, number];

export type TemperatureAttribution = {
	explainedByTemperature: boolean | null;
	reason: AttributionReason;
	/**
	 * What the residual constant is: the rate factor that began with the span, beyond what the
	 * temperature accounts for (when windows before the span hold counts), or the factor at the
	 * nominal temperature (the span alone).
	 */
	residualBasis: 'change_at_span_start' | 'nominal_intercept' | null;
	windowsFitted: number;
	spanWindowsFitted: number;
	/** ln(observed/predicted at nominal) over the span's fitted windows. */
	logExcess: number | null;
	/** β: the measured −A·s. */
	temperatureSlope: number | null;
	temperatureSlopeInterval: Interval | null;
	/** Share of the chart's log excess over the span that the measured temperature term carries. */
	temperatureShare: number | null;
	temperatureShareInterval: Interval | null;
	/** The residual constant as a rate factor (see residualBasis). */
	residualRatio: number | null;
	residualInterval: Interval | null;
	/** Modelled log-rate spread and largest departure from nominal of the temperature term. */
	logSpread: number;
	logDeparture: number;
	/** IRLS iterations (0 when no two-term fit was made). */
	iterations: number;
};

export type PoissonFit = {
	coefficients: number[];
	/** Inverse Fisher information at the maximum, row by row. */
	covariance: number[][];
	iterations: number;
};

const MAX_ITERATIONS = 100;
/** Counts before the span needed to measure a change at its start. */
const MIN_COUNTS_BEFORE = 10;
const TOLERANCE = 1e-10;

/**
 * Maximum-likelihood fit of ln μ_i = offset_i + Σ_j b_j·X_ij for Poisson counts y_i (X's rows
 * are the windows' covariates; include a column of ones for a constant), by Newton's method with
 * step halving, started from the constant-only fit. Null when the maximum is not finite or not
 * unique (all counts zero, collinear columns, counts that separate perfectly).
 */
export function fitPoissonGlm(y: readonly number[], offset: readonly number[], X: readonly (readonly number[])[]): PoissonFit | null {
	const n = y.length;
	if (offset.length !== n || X.length !== n)
		throw new RangeError(`y, offset and X must have the same length, got ${n}, ${offset.length}, ${X.length}`);
	if (n === 0) throw new RangeError('the fit needs at least one window');
	const p = X[0].length;
	for (let i = 0; i < n; i++) {
		if (!(Number.isInteger(y[i]) && y[i] >= 0)) throw new RangeError(`y[${i}] must be a whole number ≥ 0, got ${y[i]}`);
		if (!Number.isFinite(offset[i])) throw new RangeError(`offset[${i}] must be finite, got ${offset[i]}`);
		if (X[i].length !== p || !X[i].every(Number.isFinite)) throw new RangeError(`X[${i}] must hold ${p} finite covariates`);
	}
	const sumY = y.reduce((s, v) => s + v, 0);
	if (sumY === 0) return null;
	const eta = (b: readonly number[], i: number) => {
		let e = offset[i];
		for (let j = 0; j < p; j++) e += b[j] * X[i][j];
		return e;
	};
	const logLik = (b: readonly number[]) => {
		let l = 0;
		for (let i = 0; i < n; i++) {
			const e = eta(b, i);
			l += y[i] * e - Math.exp(e);
		}
		return l;
	};
	// Start: ordinary least squares is not available for ln 0, so start from b = 0 and let the
	// halving keep every step uphill.
	let b = new Array<number>(p).fill(0);
	let current = logLik(b);
	for (let it = 1; it <= MAX_ITERATIONS; it++) {
		const { score, information } = scoreAndInformation(y, offset, X, b, eta);
		const step = solveLinearSystem(information, score, p);
		if (!step || !step.every(Number.isFinite)) return null;
		let scale = 1;
		let next = logLik(b.map((v, j) => v + step[j]));
		// Uphill up to rounding: near the maximum the log-likelihood no longer resolves the step.
		const slack = 1e-13 * Math.abs(current);
		for (let halvings = 0; !(next >= current - slack) && halvings < 40; halvings++) {
			scale /= 2;
			next = logLik(b.map((v, j) => v + scale * step[j]));
		}
		if (!(next >= current - 1e-12 * Math.abs(current))) return null;
		b = b.map((v, j) => v + scale * step[j]);
		current = next;
		if (step.every((d, j) => Math.abs(scale * d) < TOLERANCE * (1 + Math.abs(b[j])))) {
			const { information: info } = scoreAndInformation(y, offset, X, b, eta);
			const covariance: number[][] = Array.from({ length: p }, () => new Array<number>(p).fill(0));
			for (let j = 0; j < p; j++) {
				const unit = new Float64Array(p);
				unit[j] = 1;
				const col = solveLinearSystem(info, unit, p);
				if (!col || !col.every(Number.isFinite)) return null;
				for (let k = 0; k < p; k++) covariance[k][j] = col[k];
			}
			if (!covariance.every((row, j) => row[j] > 0)) return null;
			return { coefficients: b, covariance, iterations: it };
		}
	}
	return null;
}

/** U = Xᵀ(y − μ) and the Fisher information XᵀWX with W = diag(μ) (canonical link). */
function scoreAndInformation(
	y: readonly number[],
	offset: readonly number[],
	X: readonly (readonly number[])[],
	b: readonly number[],
	eta: (b: readonly number[], i: number) => number
) {
	const p = b.length;
	const score = new Float64Array(p);
	const information = new Float64Array(p * p);
	for (let i = 0; i < y.length; i++) {
		const mu = Math.exp(eta(b, i));
		const row = X[i];
		for (let j = 0; j < p; j++) {
			score[j] += (y[i] - mu) * row[j];
			for (let k = 0; k < p; k++) information[j * p + k] += mu * row[j] * row[k];
		}
	}
	return { score, information };
}

const sorted = (a: number, b: number): Interval => (a <= b ? [a, b] : [b, a]);

export function attributeToTemperature(input: AttributionInput): TemperatureAttribution {
	const { x_nominal, confidence } = input;
	const minLogSpread = input.minLogSpread ?? 0.05;
	const largeShare = input.largeShare ?? 0.5;
	if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must lie strictly between 0 and 1, got ${confidence}`);
	if (!Number.isFinite(x_nominal)) throw new RangeError(`x_nominal must be finite, got ${x_nominal}`);
	if (!(input.modelSlope >= 0)) throw new RangeError(`modelSlope must be ≥ 0, got ${input.modelSlope}`);
	const z = jStat.normal.inv(0.5 + confidence / 2, 0, 1);
	const fitted = input.windows.filter((w) => w.expectedNominal > 0 && Number.isFinite(w.x));
	const span = fitted.filter((w) => w.inSpan);
	const before = fitted.filter((w) => !w.inSpan);
	const slope = input.modelSlope > 0 ? input.modelSlope : 1;
	let xMin = Infinity,
		xMax = -Infinity,
		departure = 0;
	for (const w of fitted) {
		xMin = Math.min(xMin, w.x);
		xMax = Math.max(xMax, w.x);
		departure = Math.max(departure, Math.abs(w.x - x_nominal));
	}
	const sum = (ws: readonly AttributionWindow[], f: (w: AttributionWindow) => number) => ws.reduce((s, w) => s + f(w), 0);
	const spanY = sum(span, (w) => w.count);
	const spanE = sum(span, (w) => w.expectedNominal);
	const beforeY = sum(before, (w) => w.count);
	const beforeE = sum(before, (w) => w.expectedNominal);
	const logExcess = spanY > 0 && spanE > 0 ? Math.log(spanY / spanE) : null;
	const base: TemperatureAttribution = {
		explainedByTemperature: null,
		reason: 'no_temperature',
		residualBasis: null,
		windowsFitted: fitted.length,
		spanWindowsFitted: span.length,
		logExcess,
		temperatureSlope: null,
		temperatureSlopeInterval: null,
		temperatureShare: null,
		temperatureShareInterval: null,
		residualRatio: null,
		residualInterval: null,
		logSpread: fitted.length > 0 ? slope * (xMax - xMin) : 0,
		logDeparture: slope * departure,
		iterations: 0
	};
	if (span.length === 0) return base;
	if (spanY + beforeY === 0) return { ...base, reason: 'no_counts' };
	// At a steady temperature a change that began with the span is told from the windows before it.
	const withBefore = beforeY >= MIN_COUNTS_BEFORE;
	const ratioInterval = (logValue: number, se: number): Interval => [Math.exp(logValue - z * se), Math.exp(logValue + z * se)];
	const excludesOne = (i: Interval) => i[0] > 1 || i[1] < 1;

	if (base.logSpread < minLogSpread) {
		// The temperature did not move: it cannot account for a change. Ratios of sums are the
		// maximum-likelihood fits here (a constant, or a step at the span's start), with
		// Fisher variances 1/Σy per group.
		if (base.logDeparture < minLogSpread && spanY > 0) {
			const a = Math.log(spanY / spanE);
			const residualInterval = ratioInterval(a, 1 / Math.sqrt(spanY));
			return {
				...base,
				reason: 'temperature_at_nominal',
				residualBasis: 'nominal_intercept',
				explainedByTemperature: excludesOne(residualInterval) ? false : null,
				temperatureShare: 0,
				residualRatio: Math.exp(a),
				residualInterval
			};
		}
		// Before the span the rate must have agreed with the chart's prediction: a rate that was
		// already off at this temperature (a wrong temperature law) has no onset to point at.
		const chartSlope = input.chartFollowsTemperature ? input.modelSlope : 0;
		const beforeChart = sum(before, (w) => w.expectedNominal * Math.exp(-chartSlope * (w.x - x_nominal)));
		const agreedBefore = withBefore && !excludesOne(ratioInterval(Math.log(beforeY / beforeChart), 1 / Math.sqrt(beforeY)));
		if (agreedBefore && spanY > 0) {
			const g = Math.log(spanY / spanE) - Math.log(beforeY / beforeE);
			const residualInterval = ratioInterval(g, Math.sqrt(1 / spanY + 1 / beforeY));
			return {
				...base,
				reason: excludesOne(residualInterval) ? 'changed_at_steady_temperature' : 'temperature_steady',
				residualBasis: 'change_at_span_start',
				explainedByTemperature: excludesOne(residualInterval) ? false : null,
				temperatureShare: 0,
				residualRatio: Math.exp(g),
				residualInterval
			};
		}
		return { ...base, reason: 'temperature_steady' };
	}

	const fit = fitPoissonGlm(
		fitted.map((w) => w.count),
		fitted.map((w) => Math.log(w.expectedNominal)),
		fitted.map((w) => [1, w.x - x_nominal])
	);
	if (!fit) return { ...base, reason: 'no_fit' };
	const [residualLog, b] = fit.coefficients;
	const seR = Math.sqrt(fit.covariance[0][0]);
	const seB = Math.sqrt(fit.covariance[1][1]);
	const slopeInterval: Interval = [b - z * seB, b + z * seB];
	// The chart's prediction already carries −A·s·(x − x_nom) when it follows the temperature:
	// what the measured temperature adds to it is (β + A·s)·(x − x_nom).
	const chartSlope = input.chartFollowsTemperature ? input.modelSlope : 0;
	const meanD = spanE > 0 ? sum(span, (w) => w.expectedNominal * (w.x - x_nominal)) / spanE : 0;
	const excess = input.chartLogExcess;
	const shareOf = (beta: number) => ((beta + chartSlope) * meanD) / excess;
	const share = Number.isFinite(excess) && excess !== 0 ? shareOf(b) : null;
	const shareInterval = share !== null ? sorted(shareOf(slopeInterval[0]), shareOf(slopeInterval[1])) : null;
	const residualInterval = ratioInterval(residualLog, seR);
	const result: TemperatureAttribution = {
		...base,
		residualBasis: 'nominal_intercept',
		iterations: fit.iterations,
		temperatureSlope: b,
		temperatureSlopeInterval: slopeInterval,
		temperatureShare: share,
		temperatureShareInterval: shareInterval,
		residualRatio: Math.exp(residualLog),
		residualInterval
	};
	const alternative = excess;
	const alternativeExcluded = !(residualLog - z * seR <= alternative && alternative <= residualLog + z * seR);
	if (excludesOne(residualInterval)) return { ...result, explainedByTemperature: false, reason: 'residual_constant' };
	if (shareInterval && shareInterval[1] < largeShare)
		return { ...result, explainedByTemperature: false, reason: 'temperature_share_small' };
	if (shareInterval && shareInterval[0] > 0 && share! >= largeShare && alternativeExcluded) {
		return { ...result, explainedByTemperature: true, reason: 'temperature_carries_it' };
	}
	return { ...result, reason: 'intervals_too_wide' };
}
