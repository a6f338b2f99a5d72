import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { outboxExpiry_ms } from '$lib/server/outbox/settings';
import { retryDelivery } from '$lib/server/outbox/worker';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Sends a delivery again now, whatever its state (but not while a send of it is in flight). */
export const POST: RequestHandler = async (event) => {
	requireRole(event, 'admin');
	const { db, delivery } = await getRuntime();
	const result = await retryDelivery(db, event.params.id, outboxExpiry_ms());
	if (!result.row) error(result.error ?? 500, result.message ?? 'retry failed');
	void delivery.worker.wake();
	return json({ delivery: result.row });
};
