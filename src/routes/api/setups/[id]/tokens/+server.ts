import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { safeText } from '$lib/protocol/safe-text';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import { createAgentToken } from '$lib/server/setups/tokens';
import type { RequestHandler } from './$types';

const body = z.object({ label: safeText(z.string().trim().min(1, 'label is required').max(80, 'label is at most 80 characters')) });

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { label } = await readJson(event.request, body);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	const { token, secret } = await createAgentToken(db, event.params.id, label, user.id);
	return json({ token, secret }, { status: 201 });
};
