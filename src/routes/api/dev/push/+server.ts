import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** What the local push catcher received, decrypted; exists only while it runs (PHASEWARDEN_CATCHER=1). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { delivery } = await getRuntime();
	if (!delivery.pushCatcher) error(404, 'the push catcher is not running (set PHASEWARDEN_CATCHER=1)');
	return json({ endpointBase: `http://127.0.0.1:${delivery.pushCatcher.port}/push/`, messages: delivery.pushCatcher.messages() });
};
