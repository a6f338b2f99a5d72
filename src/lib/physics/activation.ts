// The activation rate model the monitor compares against, W = W0·exp(−A/(2n̄+1)): its prediction
// band, and its fit from an operator's calibration table or from simulated rates.
import jStat from 'jstat';
import { noiseFactor } from './occupation';

/** Rotating-frame operating point: detuning δ, amplitude damping γ, drive ε (any one unit). */
export type OperatingPoint = { detuning: number; damping: number; drive: number };

export type RateModel = {
	process: 'switching' | 'escape';
	W0_per_s: number;
	/** Activation exponent at the reference operating point, in units of the noise factor. */
	A: number;
	mode_GHz: number;
	/** Temperature the model was made for (the fridge's usual base temperature). */
	nominal_mK: number;
	/** Standard deviation of ln W0, i.e. about the relative uncertainty of W0. */
	W0_sigma?: number;
	/** Standard deviation of A. */
	A_sigma?: number;
	/** Covariance of (ln W0, A). */
	covariance?: number;
	/** Range the model was calibrated over; scale is s(op)/s(reference). */
	fittedRange?: { T_mK?: [number, number]; scale?: [number, number] };
	/** Operating point A refers to; escape models scale from it. */
	reference?: OperatingPoint;
	source: 'planner' | 'calibration' | 'manual';
};

export type RateConditions = { T_mK: number; operatingPoint?: OperatingPoint };

export type RatePrediction = {
	rate_per_s: number;
	lower: number;
	upper: number;
	warnings: string[];
};

/** One row of a calibration table: switches (or escapes) counted over an exposure. */
export type CalibrationPoint = {
	count: number;
	exposure_s: number;
	T_mK?: number;
	operatingPoint?: OperatingPoint;
};

export type GoodnessOfFit = {
	/** Weighted chi-square for the least-squares fit, Poisson deviance for maximum likelihood. */
	statistic: 'chi-square' | 'deviance';
	value: number;
	dof: number;
	/** Upper-tail chi-square probability; null when there are no degrees of freedom left. */
	pValue: number | null;
};

export type FitMethod = 'wls' | 'poisson-ml';

export type ActivationFit = {
	model: RateModel;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
};

export type SimulatedRate = { lambda: number; rate: number; count: number; exposure: number };

export type SimulationFit = {
	/** R in W = W0·e^{−R/λ}. */
	exponent: number;
	exponent_sigma: number;
	prefactor: number;
	/** Standard deviation of ln prefactor. */
	lnPrefactor_sigma: number;
	/** Covariance of (ln prefactor, exponent). */
	covariance: number;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
	points: (SimulatedRate & { inverseLambda: number; lnRate: number })[];
};

/**
 * predictRate warns when the temperature (or operating-point scale) lies more than this fraction
 * beyond the fitted range: below min/(1 + margin) or above max·(1 + margin).
 */
export const RANGE_MARGIN = 0.1;

/**
 * Least squares on ln(count/exposure) needs every count at least this large: var(ln N) ≈ 1/N and
 * the bias of ln N, about −1/(2N), is then ≤ 2.5 %, small beside its ±1/√N spread. Below it the
 * Poisson likelihood is used instead (common practice).
 */
export const MIN_COUNT_FOR_WLS = 20;

const DEFAULT_CONFIDENCE = 0.95;

/** s = (γ² + δ²)/ε², the operating-point factor the escape exponent from vacuum scales with. */
export function operatingPointScale(op: OperatingPoint, name = 'operatingPoint'): number {
	for (const key of ['detuning', 'damping', 'drive'] as const) {
		if (!Number.isFinite(op[key])) throw new RangeError(`${name}.${key} must be a finite number`);
	}
	if (op.drive === 0) throw new RangeError(`${name}.drive must be non-zero`);
	return (op.damping ** 2 + op.detuning ** 2) / op.drive ** 2;
}

function scaleRatio(op: OperatingPoint, reference: OperatingPoint): number {
	const sRef = operatingPointScale(reference, 'reference');
	if (sRef === 0) throw new RangeError('reference has zero damping and detuning, so s(reference) = 0');
	return operatingPointScale(op) / sRef;
}

function requireFinite(name: string, value: unknown, min = -Infinity): number {
	if (typeof value !== 'number' || !Number.isFinite(value) || value < min) {
		const bound = min === -Infinity ? '' : ` ≥ ${min}`;
		throw new RangeError(`${name} must be a finite number${bound}, got ${String(value)}`);
	}
	return value;
}

function requireConfidence(confidence: number): void {
	if (!(confidence > 0 && confidence < 1)) {
		throw new RangeError(`confidence must lie strictly between 0 and 1, got ${confidence}`);
	}
}

function outsideRange(value: number, [min, max]: [number, number]): boolean {
	return value < min / (1 + RANGE_MARGIN) || value > max * (1 + RANGE_MARGIN);
}

function validateModel(model: RateModel): void {
	if (model.process !== 'switching' && model.process !== 'escape') {
		throw new RangeError(`model.process must be 'switching' or 'escape', got ${String(model.process)}`);
	}
	requireFinite('model.W0_per_s', model.W0_per_s, 0);
	if (model.W0_per_s === 0) throw new RangeError('model.W0_per_s must be > 0');
	requireFinite('model.A', model.A);
	requireFinite('model.mode_GHz', model.mode_GHz, 0);
	if (model.W0_sigma !== undefined) requireFinite('model.W0_sigma', model.W0_sigma, 0);
	if (model.A_sigma !== undefined) requireFinite('model.A_sigma', model.A_sigma, 0);
	if (model.covariance !== undefined) {
		requireFinite('model.covariance', model.covariance);
		const bound = (model.W0_sigma ?? 0) * (model.A_sigma ?? 0);
		if (Math.abs(model.covariance) > bound * (1 + 1e-9)) {
			throw new RangeError('model.covariance exceeds W0_sigma·A_sigma: not a valid covariance');
		}
	}
}

/**
 * Predicted rate at a temperature (and operating point, for escape) with a two-sided band.
 * ln W = ln W0 − A·x is linear in (ln W0, A), so propagating their covariance gives the exact
 * normal band of ln W; the band on W is its exponential. confidence is two-sided, 0.95 unless
 * given.
 */
export function predictRate(
	model: RateModel,
	conditions: RateConditions,
	confidence = DEFAULT_CONFIDENCE
): RatePrediction {
	validateModel(model);
	requireConfidence(confidence);
	const warnings: string[] = [];
	const T_mK = requireFinite('conditions.T_mK', conditions.T_mK, 0);

	let ratio = 1;
	const op = conditions.operatingPoint;
	if (op && model.process === 'switching') {
		warnings.push('operating point ignored: the switching model does not scale with it');
	} else if (op) {
		if (!model.reference) {
			throw new RangeError(
				'the escape model has no reference operating point, so it cannot be scaled to the requested one'
			);
		}
		ratio = scaleRatio(op, model.reference);
		const scaleRange = model.fittedRange?.scale;
		if (scaleRange && outsideRange(ratio, scaleRange)) {
			warnings.push(
				`operating-point scale ${fmt(ratio)} lies more than ${RANGE_MARGIN * 100} % outside the fitted range ${fmt(scaleRange[0])}–${fmt(scaleRange[1])}`
			);
		} else if (!scaleRange && Math.abs(ratio - 1) > RANGE_MARGIN) {
			warnings.push(
				`operating-point scale ${fmt(ratio)} was not calibrated: A is scaled by theory, (γ²+δ²)/ε²`
			);
		}
	}

	const tRange = model.fittedRange?.T_mK;
	if (tRange && outsideRange(T_mK, tRange)) {
		warnings.push(
			`temperature ${fmt(T_mK)} mK lies more than ${RANGE_MARGIN * 100} % outside the fitted range ${fmt(tRange[0])}–${fmt(tRange[1])} mK`
		);
	}

	const x = ratio / noiseFactor(model.mode_GHz, T_mK);
	const lnW = Math.log(model.W0_per_s) - model.A * x;
	const s0 = model.W0_sigma ?? 0;
	const sA = model.A_sigma ?? 0;
	const cov = model.covariance ?? 0;
	if (model.W0_sigma === undefined && model.A_sigma === undefined) {
		warnings.push('the model carries no uncertainty: the band is the point value');
	}
	// Rounding can push a near-singular variance a hair below zero.
	const sd = Math.sqrt(Math.max(0, s0 * s0 + x * x * sA * sA - 2 * x * cov));
	const z = jStat.normal.inv(0.5 + confidence / 2, 0, 1);
	return {
		rate_per_s: Math.exp(lnW),
		lower: Math.exp(lnW - z * sd),
		upper: Math.exp(lnW + z * sd),
		warnings
	};
}

function fmt(value: number): string {
	return Number(value.toPrecision(3)).toString();
}

type LogLinearFit = {
	lnW0: number;
	A: number;
	var_lnW0: number;
	var_A: number;
	cov: number;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
};

function pValue(value: number, dof: number): number | null {
	return dof > 0 ? 1 - jStat.chisquare.cdf(value, dof) : null;
}

function span(values: number[]): number {
	return values.length === 0 ? 0 : Math.max(...values) - Math.min(...values);
}

function hasTwoDistinct(values: number[]): boolean {
	const scale = Math.max(1, ...values.map(Math.abs));
	return span(values) > 1e-9 * scale;
}

/**
 * Fits ln μ_i = ln exposure_i + ln W0 − A·x_i to counts. xLabel names x in error messages.
 * Both paths work with x centred on its count-weighted mean, where the intercept and slope are
 * (nearly) uncorrelated, and transform back to ln W0 at x = 0.
 */
function fitLogLinear(x: number[], count: number[], exposure: number[], xLabel: string): LogLinearFit {
	const total = count.reduce((a, b) => a + b, 0);
	if (total === 0) throw new RangeError('all counts are zero: the rate cannot be fitted');
	if (!hasTwoDistinct(x)) {
		throw new RangeError(`the points span a single value of ${xLabel}: W0 and A cannot both be determined`);
	}
	if (!hasTwoDistinct(x.filter((_, i) => count[i] > 0))) {
		// With events at one x only, the likelihood keeps rising as the slope runs off to infinity.
		throw new RangeError(
			`counts are non-zero at a single value of ${xLabel}: W0 and A cannot both be determined`
		);
	}
	const xBar = x.reduce((acc, xi, i) => acc + xi * count[i], 0) / total;
	const u = x.map((xi) => xi - xBar);
	const fit = count.every((c) => c >= MIN_COUNT_FOR_WLS)
		? weightedLeastSquares(u, count, exposure)
		: poissonMaximumLikelihood(u, count, exposure);
	// Intercept at x = 0: ln W0 = c − b·x̄, and A = −b.
	const { c, b, vc, vb, cbc } = fit;
	return {
		lnW0: c - b * xBar,
		A: -b,
		var_lnW0: vc + xBar * xBar * vb - 2 * xBar * cbc,
		var_A: vb,
		cov: -(cbc - xBar * vb),
		method: fit.method,
		goodnessOfFit: fit.goodnessOfFit
	};
}

type CentredFit = {
	c: number;
	b: number;
	vc: number;
	vb: number;
	cbc: number;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
};

/** ln(count/exposure) on u with weights = counts (var ln N ≈ 1/N); variances taken as known. */
function weightedLeastSquares(u: number[], count: number[], exposure: number[]): CentredFit {
	const y = count.map((n, i) => Math.log(n / exposure[i]));
	const sw = count.reduce((a, b) => a + b, 0);
	const swu = u.reduce((acc, ui, i) => acc + count[i] * ui, 0);
	const swy = y.reduce((acc, yi, i) => acc + count[i] * yi, 0);
	const suu = u.reduce((acc, ui, i) => acc + count[i] * ui * ui, 0);
	const suy = u.reduce((acc, ui, i) => acc + count[i] * ui * y[i], 0);
	const det = sw * suu - swu * swu;
	const c = (suu * swy - swu * suy) / det;
	const b = (sw * suy - swu * swy) / det;
	const chi2 = y.reduce((acc, yi, i) => acc + count[i] * (yi - c - b * u[i]) ** 2, 0);
	const dof = y.length - 2;
	return {
		c,
		b,
		vc: suu / det,
		vb: sw / det,
		cbc: -swu / det,
		method: 'wls',
		goodnessOfFit: { statistic: 'chi-square', value: chi2, dof, pValue: pValue(chi2, dof) }
	};
}

/**
 * Poisson maximum likelihood by Newton's method (for the log link the observed and expected
 * information coincide, so this is also IRLS), with step halving so the likelihood never falls.
 * Covariance from the inverse Fisher information at the optimum.
 */
function poissonMaximumLikelihood(u: number[], count: number[], exposure: number[]): CentredFit {
	const lnE = exposure.map(Math.log);
	const n = u.length;
	const state = (c: number, b: number) => {
		let logLik = 0;
		let g0 = 0;
		let g1 = 0;
		let i00 = 0;
		let i01 = 0;
		let i11 = 0;
		for (let i = 0; i < n; i++) {
			const eta = lnE[i] + c + b * u[i];
			const mu = Math.exp(eta);
			logLik += count[i] * eta - mu;
			g0 += count[i] - mu;
			g1 += u[i] * (count[i] - mu);
			i00 += mu;
			i01 += mu * u[i];
			i11 += mu * u[i] * u[i];
		}
		return { logLik, g0, g1, i00, i01, i11 };
	};

	// Start from least squares on ln((N + ½)/E), which exists even where N = 0.
	const start = weightedLeastSquares(
		u,
		count.map((k) => k + 0.5),
		exposure
	);
	let c = start.c;
	let b = start.b;
	let s = state(c, b);
	const uSpan = Math.max(span(u), 1e-300);
	let converged = false;
	for (let iter = 0; iter < 200 && !converged; iter++) {
		const det = s.i00 * s.i11 - s.i01 * s.i01;
		const dc = (s.i11 * s.g0 - s.i01 * s.g1) / det;
		const db = (s.i00 * s.g1 - s.i01 * s.g0) / det;
		let t = 1;
		let next = state(c + dc, b + db);
		while (!(next.logLik >= s.logLik - 1e-12 * Math.abs(s.logLik)) && t > 1e-12) {
			t /= 2;
			next = state(c + t * dc, b + t * db);
		}
		c += t * dc;
		b += t * db;
		s = next;
		converged = Math.abs(t * dc) + Math.abs(t * db) * uSpan < 1e-11;
	}
	if (!converged || !Number.isFinite(c) || !Number.isFinite(b)) {
		throw new Error('the Poisson likelihood fit did not converge');
	}
	const det = s.i00 * s.i11 - s.i01 * s.i01;
	let deviance = 0;
	for (let i = 0; i < n; i++) {
		const mu = Math.exp(lnE[i] + c + b * u[i]);
		const k = count[i];
		deviance += 2 * ((k > 0 ? k * Math.log(k / mu) : 0) - (k - mu));
	}
	const dof = n - 2;
	return {
		c,
		b,
		vc: s.i11 / det,
		vb: s.i00 / det,
		cbc: -s.i01 / det,
		method: 'poisson-ml',
		goodnessOfFit: { statistic: 'deviance', value: deviance, dof, pValue: pValue(deviance, dof) }
	};
}

function requireCount(name: string, value: unknown): number {
	const k = requireFinite(name, value, 0);
	if (!Number.isInteger(k)) throw new RangeError(`${name} must be a whole number, got ${k}`);
	return k;
}

function requireExposure(name: string, value: unknown): number {
	const e = requireFinite(name, value, 0);
	if (e === 0) throw new RangeError(`${name} must be > 0`);
	return e;
}

export type ActivationFitOptions = {
	mode_GHz: number;
	process: 'switching' | 'escape';
	/** Escape only: operating point A refers to. Defaults to the first point's when all have one. */
	reference?: OperatingPoint;
	/** Temperature for points that carry none; also stored as the model's nominal temperature. */
	nominal_mK?: number;
};

/**
 * Fits W0 and A to a calibration table, x_i = [s(op_i)/s(ref)]/(2n̄(f, T_i)+1) for escape and
 * 1/(2n̄+1) for switching. Least squares on ln W when every count ≥ MIN_COUNT_FOR_WLS, else
 * Poisson maximum likelihood. Throws when the points cannot fix both parameters.
 */
export function fitActivation(points: CalibrationPoint[], options: ActivationFitOptions): ActivationFit {
	const { mode_GHz, process } = options;
	requireFinite('mode_GHz', mode_GHz, 0);
	if (mode_GHz === 0) throw new RangeError('mode_GHz must be > 0');
	if (process !== 'switching' && process !== 'escape') {
		throw new RangeError(`process must be 'switching' or 'escape', got ${String(process)}`);
	}
	if (options.nominal_mK !== undefined) requireFinite('nominal_mK', options.nominal_mK, 0);
	if (!Array.isArray(points) || points.length < 2) {
		throw new RangeError('at least two calibration points are needed to fit W0 and A');
	}

	const withOp = points.filter((p) => p.operatingPoint !== undefined);
	if (withOp.length > 0 && process === 'switching') {
		throw new RangeError('operating points apply only to escape from vacuum, not to switching');
	}
	let reference = options.reference;
	if (!reference && withOp.length > 0) {
		if (withOp.length < points.length) {
			throw new RangeError(
				'some points have an operating point and some do not: give a reference operating point for the others'
			);
		}
		reference = points[0].operatingPoint;
	}

	const temps: number[] = [];
	const ratios: number[] = [];
	const x: number[] = [];
	const count: number[] = [];
	const exposure: number[] = [];
	points.forEach((p, i) => {
		const name = `points[${i}]`;
		count.push(requireCount(`${name}.count`, p.count));
		exposure.push(requireExposure(`${name}.exposure_s`, p.exposure_s));
		const T = p.T_mK ?? options.nominal_mK;
		if (T === undefined) throw new RangeError(`${name} has no T_mK and no nominal_mK was given`);
		temps.push(requireFinite(`${name}.T_mK`, T, 0));
		const ratio = p.operatingPoint && reference ? scaleRatio(p.operatingPoint, reference) : 1;
		ratios.push(ratio);
		x.push(ratio / noiseFactor(mode_GHz, T));
	});

	const label = withOp.length > 0 ? 'the operating-point-scaled 1/(2n̄+1)' : '1/(2n̄+1) (temperature)';
	const fit = fitLogLinear(x, count, exposure, label);
	const fittedRange: RateModel['fittedRange'] = {
		T_mK: [Math.min(...temps), Math.max(...temps)]
	};
	if (withOp.length > 0) fittedRange.scale = [Math.min(...ratios), Math.max(...ratios)];
	const model: RateModel = {
		process,
		W0_per_s: Math.exp(fit.lnW0),
		A: fit.A,
		mode_GHz,
		nominal_mK: options.nominal_mK ?? Math.min(...temps),
		W0_sigma: Math.sqrt(fit.var_lnW0),
		A_sigma: Math.sqrt(fit.var_A),
		covariance: fit.cov,
		fittedRange,
		source: 'calibration'
	};
	if (reference) model.reference = { ...reference };
	return { model, method: fit.method, goodnessOfFit: fit.goodnessOfFit };
}

/**
 * Exponent R and prefactor of W = W0·e^{−R/λ} from simulated rates at several noise strengths λ,
 * by the same fit with x = 1/λ. Each rate must equal count/exposure (exposure in the simulation's
 * time unit), since the counts carry the statistical weight.
 */
export function fitFromSimulation(results: SimulatedRate[]): SimulationFit {
	if (!Array.isArray(results) || results.length < 2) {
		throw new RangeError('at least two simulated rates are needed to fit the exponent');
	}
	const points = results.map((r, i) => {
		const name = `results[${i}]`;
		const lambda = requireFinite(`${name}.lambda`, r.lambda, 0);
		if (lambda === 0) throw new RangeError(`${name}.lambda must be > 0`);
		const rate = requireFinite(`${name}.rate`, r.rate, 0);
		const count = requireCount(`${name}.count`, r.count);
		const exposure = requireExposure(`${name}.exposure`, r.exposure);
		if (Math.abs(rate * exposure - count) > 1e-6 * Math.max(1, count)) {
			throw new RangeError(`${name}.rate must equal count/exposure (${count}/${exposure}), got ${rate}`);
		}
		return { lambda, rate, count, exposure, inverseLambda: 1 / lambda, lnRate: Math.log(rate) };
	});
	const fit = fitLogLinear(
		points.map((p) => p.inverseLambda),
		points.map((p) => p.count),
		points.map((p) => p.exposure),
		'1/λ'
	);
	return {
		exponent: fit.A,
		exponent_sigma: Math.sqrt(fit.var_A),
		prefactor: Math.exp(fit.lnW0),
		lnPrefactor_sigma: Math.sqrt(fit.var_lnW0),
		covariance: fit.cov,
		method: fit.method,
		goodnessOfFit: fit.goodnessOfFit,
		points
	};
}
