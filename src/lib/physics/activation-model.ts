// The activation rate model's shapes and shared constants (see activation.ts for the model).
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

export const DEFAULT_CONFIDENCE = 0.95;
