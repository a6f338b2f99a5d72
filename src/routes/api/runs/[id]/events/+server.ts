import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { eventStream } from '$lib/server/live/sse';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db, bus } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return eventStream(bus, (e) => e.runId === run.id, event.request.signal);
};
