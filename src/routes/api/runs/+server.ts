import { z } from 'zod';
import { safeText } from '$lib/protocol/safe-text';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { listRuns } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const query = z.object({
	setup: safeText(z.string().min(1)).optional(),
	status: z.enum(['open', 'ended'], { message: 'status must be open or ended' }).optional()
});

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const filter = parseQuery(event.url, query);
	const { db } = await getRuntime();
	return json({ runs: await listRuns(db, filter) });
};
