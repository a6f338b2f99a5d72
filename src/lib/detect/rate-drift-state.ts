// rate_drift's saved state: the horizon's columns, the spans, the CUSUM sides and the baseline, as
// zod schemas so a snapshot is checked on restore (see rate-drift.ts for the detector).
import { cusumDesignSchema } from './cusum-design';
import type { RateProcess } from './expected';
import { slidingSchema } from './sliding';
import { z } from 'zod';

export const H_COUNT = 0;
export const H_EXPECTED = 1;
export const H_NOMINAL = 2;
export const H_T_SUM = 3;
export const H_MEASURED = 4;
export const H_EXPOSURE = 5;
/** Chart prediction at the upper and lower edge of the reference band. */
export const H_UP = 6;
export const H_DOWN = 7;
export const H_SEQ = 8;
export const H_T_MS = 9;
export const H_WIDTH = 10;
export const H_SUMMED = 8;
/** Two-sided confidence of the baseline's interval: ±2σ of a normal. */
export const BASELINE_CONFIDENCE = 0.9544997361036416;

const spanSchema = z.object({
	count: z.number().int().min(0),
	/** Predicted at each window's temperature. */
	expected: z.number(),
	/** Predicted at the nominal temperature. */
	expectedNominal: z.number(),
	/** Sum of measured temperatures, and the windows that had one. */
	T_sum: z.number(),
	measured: z.number().int().min(0),
	windows: z.number().int().min(0),
	/** Chart prediction at the band's upper and lower edge (absent in snapshots from before the band: the prediction itself). */
	expectedUp: z.number().optional(),
	expectedDown: z.number().optional(),
	fromSeq: z.number().int(),
	from_ms: z.number(),
	toSeq: z.number().int(),
	to_ms: z.number()
});
export type Span = z.infer<typeof spanSchema>;

const sideSchema = z.object({
	/** The CUSUM statistic, ≥ 0. */
	S: z.number().min(0),
	/** Windows since the statistic last was zero; null while it is zero. */
	since: spanSchema.nullable()
});
export type Side = z.infer<typeof sideSchema>;

const baselineSchema = z.object({
	/** 'learning': the chart compares with the model's band; 'set': with the run's own baseline. */
	phase: z.enum(['learning', 'set']),
	/** Seconds of windows with exposure learned from. */
	learned_s: z.number().min(0),
	count: z.number().int().min(0),
	/** Chart prediction summed over the learning windows, and Σ prediction·x for their mean x. */
	expected: z.number().min(0),
	xWeighted: z.number(),
	fromSeq: z.number().int().nullable(),
	toSeq: z.number().int().nullable(),
	/** Once set: mean x, ln of the observed/predicted estimate, and the reference interval of ln(true/predicted) at x. */
	x: z.number().nullable(),
	lnEstimate: z.number().nullable(),
	lnLo: z.number().nullable(),
	lnHi: z.number().nullable(),
	/** The baseline's interval lies wholly outside the model's band. */
	mismatch: z.boolean()
});
export type Baseline = z.infer<typeof baselineSchema>;

const processStateSchema = z.object({
	/** Absent in snapshots from before the baseline: they start learning. */
	baseline: baselineSchema.optional(),
	up: sideSchema,
	down: sideSchema,
	/** Windows pooled into the step being built. */
	block: spanSchema.nullable(),
	horizon: slidingSchema.nullable(),
	/** The side that opened the condition, while open. */
	openSide: z.enum(['up', 'down']).nullable(),
	steps: z.number().int().min(0)
});
export type ProcessState = z.infer<typeof processStateSchema>;

export const rateDriftStateSchema = z.object({
	/** Grid designs used so far, by band, windows per step and window length, so that a restored engine never recomputes them differently. */
	designs: z.record(z.string(), cusumDesignSchema),
	switching: processStateSchema,
	escape: processStateSchema
});
export type RateDriftState = z.infer<typeof rateDriftStateSchema>;

export const freshSide = (): Side => ({ S: 0, since: null });
export const freshBaseline = (): Baseline => ({
	phase: 'learning',
	learned_s: 0,
	count: 0,
	expected: 0,
	xWeighted: 0,
	fromSeq: null,
	toSeq: null,
	x: null,
	lnEstimate: null,
	lnLo: null,
	lnHi: null,
	mismatch: false
});
export const freshProcess = (): ProcessState => ({
	baseline: freshBaseline(),
	up: freshSide(),
	down: freshSide(),
	block: null,
	horizon: null,
	openSide: null,
	steps: 0
});

/** The key of the "operating point does not match its rate model" finding. */
export const mismatchKey = (p: RateProcess) => `${p}:model`;
