import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { removeSubscription } from '$lib/server/push/subscriptions';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Removes one of the signed-in person's own devices. */
export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	if (!(await removeSubscription(db, user.id, event.params.id))) error(404, 'you have no device with this id');
	return json({ removed: event.params.id });
};
