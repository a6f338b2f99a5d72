// The silence form, shared by the page (superforms, browser and server) and the JSON API.
import { z } from 'zod';

export const silenceSchema = z.object({
	setupId: z.string().min(1, 'choose a setup'),
	/** Empty: every run of the setup. */
	runId: z.string().default(''),
	/** Empty: every rule (detector kind). */
	kind: z.string().default(''),
	duration_min: z.coerce
		.number()
		.min(0.05, 'silence for at least 0.05 minutes (3 s)')
		.max(14 * 24 * 60, 'a silence lasts at most 14 days'),
	reason: z
		.string()
		.trim()
		.min(3, 'say why (at least 3 characters), e.g. "helium transfer"')
		.max(500, 'the reason is at most 500 characters')
});
export type SilenceInput = z.infer<typeof silenceSchema>;
