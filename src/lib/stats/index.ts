// Public surface of the statistics core: exact Poisson statistics and change detectors.
export {
	poissonInterval,
	poissonUpperLimitOneSided,
	poissonUpperTail,
	poissonLowerTail,
	poissonThresholdForTail,
	rateRatioTest,
	type PoissonLimits,
	type RateRatioResult
} from './poisson';
export {
	poissonCusumStep,
	poissonCusumTwoSidedStep,
	TwoSidedPoissonCusum,
	poissonCusumArl,
	poissonCusumDecisionInterval,
	normalCusumStep,
	normalCusumArl,
	normalCusumDecisionInterval,
	type PoissonCusumPair,
	type TwoSidedPoissonCusumDesign,
	type TwoSidedPoissonCusumResult,
	type PoissonCusumArlOptions,
	type NormalCusumState,
	type NormalCusumArlParams
} from './cusum';
export { ewmaStep, ewmaLimits, ewmaArl, ewmaLimitForArl, type EwmaLimitOptions, type EwmaArlParams } from './ewma';
