// The rate model as stored for a setup and sent over the API: the same zod schema on client and server.
import { z } from 'zod';
import { numberField } from '../validation/number-field';

const finite = z.number().finite();
const range = z.tuple([finite, finite]).refine(([a, b]) => a <= b, { message: 'range must be [min, max]' });

/**
 * The uncertainty a rate model is taken to have when it states none (neither W0_sigma nor
 * A_sigma): σ(ln W0) = 0.1 and σ(A) = 5 % of A, uncorrelated — a carefully calibrated model's
 * typical error, so that the detectors' false-alarm budgets do not rest on an exact prediction.
 * A model that states its uncertainty (even 0) is taken at its word.
 */
export const DEFAULT_RATE_MODEL_UNCERTAINTY = { W0_sigma: 0.1, A_sigma_fraction: 0.05 } as const;

export const operatingPointSchema = z.object({
	detuning: numberField('detuning'),
	damping: numberField('damping').positive('damping must be positive'),
	drive: numberField('drive').refine((v) => v !== 0, 'drive must not be zero')
});

export const rateModelSchema = z.object({
	process: z.enum(['switching', 'escape'], { message: 'process must be switching or escape' }),
	W0_per_s: numberField('W0_per_s').positive('W0_per_s must be a positive rate'),
	A: numberField('A').min(0, 'A must not be negative'),
	mode_GHz: numberField('mode_GHz').positive('mode_GHz must be positive').max(100),
	nominal_mK: numberField('nominal_mK').min(0, 'nominal_mK must not be negative').max(4000),
	W0_sigma: numberField('W0_sigma').min(0).optional(),
	A_sigma: numberField('A_sigma').min(0).optional(),
	covariance: numberField('covariance').optional(),
	fittedRange: z.object({ T_mK: range.optional(), scale: range.optional() }).optional(),
	reference: operatingPointSchema.optional(),
	source: z.enum(['planner', 'calibration', 'manual']).default('manual')
});

export type RateModelInput = z.input<typeof rateModelSchema>;
