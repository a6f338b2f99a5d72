import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import { addWebhook, listWebhooks, newWebhookSchema } from '$lib/server/webhooks/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	return json({ webhooks: await listWebhooks(db, event.params.id) });
};

/** Adds a webhook; the answer carries its signing secret, shown this once. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, newWebhookSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	return json(await addWebhook(db, event.params.id, input, user.id), { status: 201 });
};
