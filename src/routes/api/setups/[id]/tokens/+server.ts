import { error } from '@sveltejs/kit';
import { agentTokenSchema } from '$lib/setups/forms';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import { createAgentToken } from '$lib/server/setups/tokens';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { label } = await readJson(event.request, agentTokenSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	const { token, secret } = await createAgentToken(db, event.params.id, label, user.id);
	return json({ token, secret }, { status: 201 });
};
