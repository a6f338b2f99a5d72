import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The local mail catcher's inbox; exists only while the catcher runs (dev, demo, tests). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { catcher } = await getRuntime();
	if (!catcher) error(404, 'the mail catcher is not running (set PHASEWARDEN_CATCHER=1)');
	return json({ messages: catcher.messages() });
};
