// Fits of the activation model: from an operator's calibration table (fitActivation) or from
// simulated rates against 1/λ (fitFromSimulation).
import type { ActivationFit, CalibrationPoint, OperatingPoint, RateModel, SimulatedRate, SimulationFit } from './activation-model';
import { requireFinite, scaleRatio } from './activation-predict';
import { fitLogLinear } from './activation-regression';
import { noiseFactor } from './occupation';

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
			throw new RangeError('some points have an operating point and some do not: give a reference operating point for the others');
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
