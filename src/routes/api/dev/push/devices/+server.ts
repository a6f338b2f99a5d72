import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { registerSubscription } from '$lib/server/push/subscriptions';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/**
 * A simulated device on the push catcher, subscribed for the signed-in person: how the demo and
 * tests receive pushes without a browser's push service. `?gone=1` makes one that answers 410.
 */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db, delivery } = await getRuntime();
	if (!delivery.pushCatcher) error(404, 'the push catcher is not running (set PHASEWARDEN_CATCHER=1)');
	const device = delivery.pushCatcher.createDevice();
	const row = await registerSubscription(db, user.id, { ...device, label: 'Simulated device (push catcher)' });
	return json({ subscription: { id: row.id, endpoint: row.endpoint, label: row.label } }, { status: 201 });
};
