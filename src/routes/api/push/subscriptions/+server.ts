import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { checkEndpoint, listSubscriptions, newSubscriptionSchema, registerSubscription } from '$lib/server/push/subscriptions';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The signed-in person's devices. */
export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	return json({ subscriptions: await listSubscriptions(db, user.id) });
};

/** Registers a device (a browser's PushSubscription JSON) for the signed-in person. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const input = await readJson(event.request, newSubscriptionSchema);
	const { db, delivery } = await getRuntime();
	const refused = checkEndpoint(input.endpoint, Boolean(delivery.pushCatcher));
	if (refused) error(400, refused);
	const row = await registerSubscription(db, user.id, input);
	return json({ subscription: { id: row.id, endpoint: row.endpoint, label: row.label, createdAt: row.createdAt } }, { status: 201 });
};
