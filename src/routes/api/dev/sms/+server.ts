import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The texts the local SMS fake received; exists only while it runs (PHASEWARDEN_CATCHER=1). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { delivery } = await getRuntime();
	if (!delivery.smsFake) error(404, 'the SMS fake is not running (set PHASEWARDEN_CATCHER=1)');
	return json({ messages: delivery.smsFake.messages() });
};
