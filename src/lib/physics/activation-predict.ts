// The rate model's prediction W = W0·exp(−A·s/(2n̄+1)) at a temperature and operating point, with
// its band from the stated uncertainties and warnings outside the calibrated range.
import {
	DEFAULT_CONFIDENCE,
	type OperatingPoint,
	RANGE_MARGIN,
	type RateConditions,
	type RateModel,
	type RatePrediction
} from './activation-model';
import { fmt } from './activation-regression';
import { noiseFactor } from './occupation';
import jStat from 'jstat';

/** s = (γ² + δ²)/ε², the operating-point factor the escape exponent from vacuum scales with. */
export function operatingPointScale(op: OperatingPoint, name = 'operatingPoint'): number {
	for (const key of ['detuning', 'damping', 'drive'] as const) {
		if (!Number.isFinite(op[key])) throw new RangeError(`${name}.${key} must be a finite number`);
	}
	if (op.drive === 0) throw new RangeError(`${name}.drive must be non-zero`);
	return (op.damping ** 2 + op.detuning ** 2) / op.drive ** 2;
}

export function scaleRatio(op: OperatingPoint, reference: OperatingPoint): number {
	const sRef = operatingPointScale(reference, 'reference');
	if (sRef === 0) throw new RangeError('reference has zero damping and detuning, so s(reference) = 0');
	return operatingPointScale(op) / sRef;
}

export function requireFinite(name: string, value: unknown, min = -Infinity): number {
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
export function predictRate(model: RateModel, conditions: RateConditions, confidence = DEFAULT_CONFIDENCE): RatePrediction {
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
			throw new RangeError('the escape model has no reference operating point, so it cannot be scaled to the requested one');
		}
		ratio = scaleRatio(op, model.reference);
		const scaleRange = model.fittedRange?.scale;
		if (scaleRange && outsideRange(ratio, scaleRange)) {
			warnings.push(
				`operating-point scale ${fmt(ratio)} lies more than ${RANGE_MARGIN * 100} % outside the fitted range ${fmt(scaleRange[0])}–${fmt(scaleRange[1])}`
			);
		} else if (!scaleRange && Math.abs(ratio - 1) > RANGE_MARGIN) {
			warnings.push(`operating-point scale ${fmt(ratio)} was not calibrated: A is scaled by theory, (γ²+δ²)/ε²`);
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
