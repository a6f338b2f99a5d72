import { requireRole } from '$lib/server/http/guard';
import { eventStream } from '$lib/server/live/sse';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Run and incident changes of every run, for the overview (frames stay on each run's stream). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { bus } = await getRuntime();
	return eventStream(bus, (e) => e.type !== 'frames', event.request.signal);
};
