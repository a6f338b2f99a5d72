import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { revokeAgentToken } from '$lib/server/setups/tokens';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { db, ingest } = await getRuntime();
	const token = await revokeAgentToken(db, event.params.id, event.params.tokenId, user.id);
	if (!token) error(404, 'no active token with this id on this setup');
	ingest.closeToken(token.id);
	return json({ token });
};
