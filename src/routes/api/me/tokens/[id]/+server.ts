import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { revokeApiToken } from '$lib/server/people/api-tokens';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const me = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const token = await revokeApiToken(db, me.id, event.params.id);
	if (!token) error(404, 'you have no active API token with this id');
	return json({ token });
};
