import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { deliveryQuerySchema, listDeliveries } from '$lib/server/outbox/list';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The outbox, newest first, with every attempt: admins only (it names every recipient). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'admin');
	const query = parseQuery(event.url, deliveryQuerySchema);
	const { db } = await getRuntime();
	return json({ deliveries: await listDeliveries(db, query) });
};
