// The span query both the summary API and the summary page accept: from_ms, to_ms (agent clock).
import { z } from 'zod';

const agentMs = z.coerce.number().int('must be a whole number of ms (agent clock)').min(0, 'must not be negative');

export const spanQuerySchema = z
	.object({ from_ms: agentMs.optional(), to_ms: agentMs.optional() })
	.refine((q) => q.from_ms === undefined || q.to_ms === undefined || q.from_ms < q.to_ms, {
		message: 'from_ms must be before to_ms',
		path: ['from_ms']
	});
