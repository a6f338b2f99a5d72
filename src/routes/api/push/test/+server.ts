import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { queueTestPush } from '$lib/server/outbox/test-notice';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Sends the signed-in person a test push on each of their devices. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db, delivery } = await getRuntime();
	const queued = await queueTestPush(db, user.id);
	if (queued === 0) error(409, 'you have no device subscribed to push yet');
	void delivery.worker.wake();
	return json({ queued }, { status: 202 });
};
