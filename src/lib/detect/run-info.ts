// What the engine knows about the run it watches, including the rate models its predictions use.
import { z } from 'zod';
import { rateModelSchema } from '../physics/rate-model-schema';

/**
 * `rateModels` are the setup's models (the object the rate planner saves, validated by the same
 * schema); `nominal_mK` is the setup's nominal mixing-chamber temperature, used for windows that
 * carry no `aux.mxc_mK` (default: each model's own nominal_mK). `operatingPoint` is the run's,
 * when known: its detuning decides whether the phase states are symmetric, and an escape model
 * with a reference operating point is scaled to it.
 */
export const runInfoSchema = z.object({
	runId: z.string().optional(),
	/** K, the number of phase states. */
	states: z.number().int().min(1),
	order: z.number().int().optional(),
	mode_GHz: z.number().optional(),
	/** Server clock when the run opened: `agent_silent` counts from here until the first frame. */
	openedAt_ms: z.number().optional(),
	nominal_mK: z.number().finite().min(0).max(4000).optional(),
	rateModels: z
		.object({
			switching: rateModelSchema.refine((m) => m.process === 'switching', 'must be a switching model (process: switching)').optional(),
			escape: rateModelSchema.refine((m) => m.process === 'escape', 'must be an escape model (process: escape)').optional()
		})
		.optional(),
	operatingPoint: z
		.object({
			detuning: z.number().finite().optional(),
			damping: z.number().finite().positive().optional(),
			drive: z.number().finite().optional()
		})
		.optional()
});

/** What a caller passes in (rate models may leave out their defaulted fields). */
export type RunInfo = z.input<typeof runInfoSchema>;
/** The same after validation, as detectors see it. */
export type ParsedRunInfo = z.output<typeof runInfoSchema>;

/** Parses run information, throwing an error that names the first bad field. */
export function parseRunInfo(run: unknown): ParsedRunInfo {
	const parsed = runInfoSchema.safeParse(run);
	if (parsed.success) return parsed.data;
	const issue = parsed.error.issues[0];
	throw new RangeError(`detector engine: run.${issue.path.map(String).join('.')}: ${issue.message}`);
}
