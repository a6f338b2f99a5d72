import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { removeWebhook } from '$lib/server/webhooks/service';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	if (!(await removeWebhook(db, event.params.id, event.params.hookId))) error(404, 'no webhook with this id on this setup');
	return json({ removed: event.params.hookId });
};
