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
// activation law ln W = ln W0 − A·s·x makes β the measured −A·s (whatever the model's A), and α
// the log rate factor at the nominal temperature that no temperature change accounts for. Counts
// per window are small, so the fit uses the Poisson likelihood and not least squares on log
// ratios (ln 0 is undefined and small-count log ratios are biased).
//
// Hand-written because no well-known npm package fits a Poisson GLM with an offset; with two
// coefficients Newton's method is a few lines and its 2×2 inverse is exact.
//
// The verdict (true = explained by temperature, false = not, null = cannot tell):
//   - the temperature never left the nominal point (the term's largest departure moves the modelled
//     rate by less than minLogSpread): the temperature cannot carry an excess → false when the
//     constant alone differs significantly from 1, else null;
//   - the temperature barely varied (the term's spread moves the modelled rate by less than
//     minLogSpread) but away from the nominal point: the constant and the temperature term are not
//     separable → null;
//   - otherwise: true when the temperature term carries the excess (its share's interval excludes
//     0 and the share is at least largeShare) AND the residual constant's interval contains 1 AND
//     excludes the constant that would explain the whole excess the chart saw (so the constant is
//     measured, not merely imprecise); false when the residual constant's interval excludes 1, or
//     the share's interval lies below largeShare; else null.
import jStat from 'jstat';

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
	| 'temperature_carries_it'
	| 'residual_constant'
	| 'temperature_share_small'
	| 'intervals_too_wide';

export type Interval = [number, number];

export type TemperatureAttribution = {
	explainedByTemperature: boolean | null;
	reason: AttributionReason;
	windowsFitted: number;
	spanWindowsFitted: number;
	/** ln(observed/predicted at nominal) over the span's fitted windows. */
	logExcess: number | null;
	/** β: the measured −A·s. */
	temperatureSlope: number | null;
	temperatureSlopeInterval: Interval | null;
	/** β·(mean x − x_nom over the span) / logExcess: the share of the log excess the temperature carries. */
	temperatureShare: number | null;
	temperatureShareInterval: Interval | null;
	/** e^α: the rate factor at the nominal temperature that the temperature does not account for. */
	residualRatio: number | null;
	residualInterval: Interval | null;
	/** Modelled log-rate spread and largest departure from nominal of the temperature term. */
	logSpread: number;
	logDeparture: number;
	/** IRLS iterations (0 when no two-term fit was made). */
	iterations: number;
};

export type PoissonFit = {
	coefficients: [number, number];
	/** Inverse Fisher information at the maximum. */
	covariance: [[number, number], [number, number]];
	iterations: number;
};

const MAX_ITERATIONS = 100;
const TOLERANCE = 1e-10;

/**
 * Maximum-likelihood fit of ln μ_i = offset_i + b0 + b1·z_i for Poisson counts y_i, by Newton's
 * method with step halving. Null when the maximum is not finite (all counts zero, no spread in z,
 * or counts that separate perfectly) — there is then nothing to report.
 */
export function fitPoissonLogLinear(y: readonly number[], offset: readonly number[], z: readonly number[]): PoissonFit | null {
	const n = y.length;
	if (offset.length !== n || z.length !== n) throw new RangeError(`y, offset and z must have the same length, got ${n}, ${offset.length}, ${z.length}`);
	for (let i = 0; i < n; i++) {
		if (!(Number.isInteger(y[i]) && y[i] >= 0)) throw new RangeError(`y[${i}] must be a whole number ≥ 0, got ${y[i]}`);
		if (!Number.isFinite(offset[i]) || !Number.isFinite(z[i])) throw new RangeError(`offset[${i}] and z[${i}] must be finite, got ${offset[i]}, ${z[i]}`);
	}
	let sumY = 0;
	let sumE = 0;
	for (let i = 0; i < n; i++) {
		sumY += y[i];
		sumE += Math.exp(offset[i]);
	}
	if (sumY === 0) return null;
	const logLik = (b0: number, b1: number) => {
		let l = 0;
		for (let i = 0; i < n; i++) {
			const eta = offset[i] + b0 + b1 * z[i];
			l += y[i] * eta - Math.exp(eta);
		}
		return l;
	};
	let b0 = Math.log(sumY / sumE);
	let b1 = 0;
	let current = logLik(b0, b1);
	for (let it = 1; it <= MAX_ITERATIONS; it++) {
		let u0 = 0, u1 = 0, i00 = 0, i01 = 0, i11 = 0;
		for (let i = 0; i < n; i++) {
			const mu = Math.exp(offset[i] + b0 + b1 * z[i]);
			const r = y[i] - mu;
			u0 += r;
			u1 += r * z[i];
			i00 += mu;
			i01 += mu * z[i];
			i11 += mu * z[i] * z[i];
		}
		const det = i00 * i11 - i01 * i01;
		if (!(det > 1e-12 * i00 * i11)) return null; // no spread in z: b1 is not identified
		let d0 = (i11 * u0 - i01 * u1) / det;
		let d1 = (i00 * u1 - i01 * u0) / det;
		let next = logLik(b0 + d0, b1 + d1);
		for (let halvings = 0; !(next >= current) && halvings < 30; halvings++) {
			d0 /= 2;
			d1 /= 2;
			next = logLik(b0 + d0, b1 + d1);
		}
		if (!(next >= current - 1e-12 * Math.abs(current))) return null;
		b0 += d0;
		b1 += d1;
		current = next;
		if (Math.abs(d0) < TOLERANCE * (1 + Math.abs(b0)) && Math.abs(d1) < TOLERANCE * (1 + Math.abs(b1))) {
			const covariance = fisherInverse(y, offset, z, b0, b1);
			if (!covariance) return null;
			return { coefficients: [b0, b1], covariance, iterations: it };
		}
	}
	return null;
}

function fisherInverse(y: readonly number[], offset: readonly number[], z: readonly number[], b0: number, b1: number): PoissonFit['covariance'] | null {
	let i00 = 0, i01 = 0, i11 = 0;
	for (let i = 0; i < y.length; i++) {
		const mu = Math.exp(offset[i] + b0 + b1 * z[i]);
		i00 += mu;
		i01 += mu * z[i];
		i11 += mu * z[i] * z[i];
	}
	const det = i00 * i11 - i01 * i01;
	if (!(det > 0) || !Number.isFinite(det)) return null;
	return [
		[i11 / det, -i01 / det],
		[-i01 / det, i00 / det]
	];
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
	const slope = input.modelSlope > 0 ? input.modelSlope : 1;
	let xMin = Infinity, xMax = -Infinity, departure = 0;
	for (const w of fitted) {
		xMin = Math.min(xMin, w.x);
		xMax = Math.max(xMax, w.x);
		departure = Math.max(departure, Math.abs(w.x - x_nominal));
	}
	let spanY = 0, spanE = 0, spanDE = 0;
	for (const w of span) {
		spanY += w.count;
		spanE += w.expectedNominal;
		spanDE += w.expectedNominal * (w.x - x_nominal);
	}
	const logExcess = spanY > 0 && spanE > 0 ? Math.log(spanY / spanE) : null;
	const base: TemperatureAttribution = {
		explainedByTemperature: null,
		reason: 'no_temperature',
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
	const sumY = fitted.reduce((s, w) => s + w.count, 0);
	if (sumY === 0) return { ...base, reason: 'no_counts' };

	if (base.logDeparture < minLogSpread) {
		// The temperature stayed at the nominal point: only the constant can carry an excess.
		const sumE = fitted.reduce((s, w) => s + w.expectedNominal, 0);
		const a = Math.log(sumY / sumE);
		const se = 1 / Math.sqrt(sumY); // Fisher information of α is Σμ̂ = Σy
		const residualInterval: Interval = [Math.exp(a - z * se), Math.exp(a + z * se)];
		const significant = residualInterval[0] > 1 || residualInterval[1] < 1;
		return {
			...base,
			reason: 'temperature_at_nominal',
			explainedByTemperature: significant ? false : null,
			temperatureShare: 0,
			residualRatio: Math.exp(a),
			residualInterval
		};
	}
	if (base.logSpread < minLogSpread) return { ...base, reason: 'temperature_steady' };

	const fit = fitPoissonLogLinear(
		fitted.map((w) => w.count),
		fitted.map((w) => Math.log(w.expectedNominal)),
		fitted.map((w) => w.x - x_nominal)
	);
	if (!fit) return { ...base, reason: 'no_fit' };
	const [a, b] = fit.coefficients;
	const seA = Math.sqrt(fit.covariance[0][0]);
	const seB = Math.sqrt(fit.covariance[1][1]);
	const slopeInterval: Interval = [b - z * seB, b + z * seB];
	const residualLog: Interval = [a - z * seA, a + z * seA];
	const meanD = spanE > 0 ? spanDE / spanE : 0;
	const share = logExcess !== null && logExcess !== 0 ? (b * meanD) / logExcess : null;
	const shareInterval = share !== null ? sorted((slopeInterval[0] * meanD) / logExcess!, (slopeInterval[1] * meanD) / logExcess!) : null;
	const result: TemperatureAttribution = {
		...base,
		iterations: fit.iterations,
		temperatureSlope: b,
		temperatureSlopeInterval: slopeInterval,
		temperatureShare: share,
		temperatureShareInterval: shareInterval,
		residualRatio: Math.exp(a),
		residualInterval: [Math.exp(residualLog[0]), Math.exp(residualLog[1])]
	};
	const residualConsistent = residualLog[0] <= 0 && residualLog[1] >= 0;
	const alternative = input.chartLogExcess;
	const alternativeExcluded = !(residualLog[0] <= alternative && alternative <= residualLog[1]);
	if (!residualConsistent) return { ...result, explainedByTemperature: false, reason: 'residual_constant' };
	if (shareInterval && shareInterval[1] < largeShare) return { ...result, explainedByTemperature: false, reason: 'temperature_share_small' };
	if (shareInterval && shareInterval[0] > 0 && share! >= largeShare && alternativeExcluded) {
		return { ...result, explainedByTemperature: true, reason: 'temperature_carries_it' };
	}
	return { ...result, reason: 'intervals_too_wide' };
}
