// Test hook (PHASEWARDEN_TEST_HOOKS=1 only): sets the morning-report clock and runs the scheduler
// once at that time, answering with the reports it made. Absent otherwise.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { setReportClock, testHooksEnabled } from '$lib/server/reports/clock';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ now_ms: z.number().int().min(0).nullable() });

export const POST: RequestHandler = async (event) => {
	if (!testHooksEnabled()) error(404, 'not found');
	requireRole(event, 'admin');
	const { now_ms } = await readJson(event.request, body);
	setReportClock(now_ms);
	const { reports } = await getRuntime();
	return json({ reports: await reports.tick() });
};
