// Test hook (PHASEWARDEN_TEST_HOOKS=1 only): sets the rota and escalation clock and checks for due
// escalation steps once at that time, answering with what it paged (`tick: false` only sets the
// clock and leaves the checking to the leader's timer). Absent otherwise.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { setPagingClock } from '$lib/server/oncall/clock';
import { testHooksEnabled } from '$lib/server/reports/clock';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ now_ms: z.number().int().min(0).nullable(), tick: z.boolean().default(true) });

export const POST: RequestHandler = async (event) => {
	if (!testHooksEnabled()) error(404, 'not found');
	requireRole(event, 'admin');
	const { now_ms, tick } = await readJson(event.request, body);
	setPagingClock(now_ms);
	const { escalation } = await getRuntime();
	return json({ paged: tick ? await escalation.tick() : [] });
};
