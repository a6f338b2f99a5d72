// The timeline's query parameters, shared by the JSON API and the timeline page's loader.
import { z } from 'zod';
import { MAX_T_MS } from '../../protocol/frame';
import { TIMELINE_POINTS_DEFAULT, TIMELINE_POINTS_MAX } from '../../timeline/plan';

const agentMs = z.coerce
	.number({ error: 'must be a time in ms (agent clock)' })
	.int('must be a whole number of ms (agent clock)')
	.min(0, 'must not be negative')
	.max(MAX_T_MS, 'is beyond the last representable time');

export const timelineQuerySchema = z
	.object({
		from_ms: agentMs.optional(),
		to_ms: agentMs.optional(),
		points: z.coerce
			.number({ error: `must be a whole number from 1 to ${TIMELINE_POINTS_MAX}` })
			.int(`must be a whole number from 1 to ${TIMELINE_POINTS_MAX}`)
			.min(1, `must be a whole number from 1 to ${TIMELINE_POINTS_MAX}`)
			.max(TIMELINE_POINTS_MAX, `must be a whole number from 1 to ${TIMELINE_POINTS_MAX}`)
			.default(TIMELINE_POINTS_DEFAULT)
	})
	.refine((q) => q.from_ms === undefined || q.to_ms === undefined || q.from_ms < q.to_ms, {
		message: 'must be after from_ms',
		path: ['to_ms']
	});
