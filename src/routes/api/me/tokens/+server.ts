import { newApiTokenSchema } from '$lib/people/forms';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { createApiToken, listApiTokens } from '$lib/server/people/api-tokens';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** The caller's own API tokens (never the secrets, which are shown once at creation). */
export const GET: RequestHandler = async (event) => {
	const me = requireRole(event, 'observer');
	const { db } = await getRuntime();
	return json({ tokens: await listApiTokens(db, me.id) });
};

export const POST: RequestHandler = async (event) => {
	const me = requireRole(event, 'observer');
	const { label } = await readJson(event.request, newApiTokenSchema);
	const { db } = await getRuntime();
	const { token, secret } = await createApiToken(db, me.id, label);
	return json({ token, secret }, { status: 201 });
};
