// Test hook (PHASEWARDEN_TEST_HOOKS=1 only): sets the rota and escalation clock and checks for due
// escalation steps once at that time, answering with what it paged. Absent otherwise.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { setPagingClock } from '$lib/server/oncall/clock';
import { testHooksEnabled } from '$lib/server/reports/clock';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ now_ms: z.number().int().min(0).nullable() });

export const POST: RequestHandler = async (event) => {
	if (!testHooksEnabled()) error(404, 'not found');
	requireRole(event, 'admin');
	const { now_ms } = await readJson(event.request, body);
	setPagingClock(now_ms);
	const { escalation } = await getRuntime();
	return json({ paged: await escalation.tick() });
};
