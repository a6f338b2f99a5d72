// What a note on a run may say: one zod schema for the API, the timeline's form and its action.
import { z } from 'zod';
import { MAX_T_MS } from '../protocol/frame';

export const ANNOTATION_TEXT_MAX = 500;

const agentMs = z.coerce
	.number({ error: 'must be a time in ms (agent clock)' })
	.int('must be a whole number of ms (agent clock)')
	.min(0, 'must not be negative')
	.max(MAX_T_MS, 'is beyond the last representable time');

export const annotationInputSchema = z
	.object({
		at_ms: agentMs,
		until_ms: agentMs.nullish(),
		text: z
			.string({ error: 'is required' })
			.trim()
			.min(1, 'is required')
			.max(ANNOTATION_TEXT_MAX, `must be at most ${ANNOTATION_TEXT_MAX} characters`)
	})
	.refine((a) => a.until_ms === undefined || a.until_ms === null || a.until_ms > a.at_ms, {
		message: 'must be after at_ms (a span ends after it starts)',
		path: ['until_ms']
	});

export type AnnotationInput = z.infer<typeof annotationInputSchema>;

/** A note as pages and the API show it. */
export type Annotation = {
	id: number;
	runId: string;
	at_ms: number;
	until_ms: number | null;
	text: string;
	authorId: string | null;
	authorName: string;
	createdAt: string;
};
