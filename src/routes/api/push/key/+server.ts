import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The VAPID public key a browser subscribes with, and whether the local push catcher runs. */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { delivery } = await getRuntime();
	return json({ publicKey: delivery.vapid.publicKey, catcher: Boolean(delivery.pushCatcher) });
};
