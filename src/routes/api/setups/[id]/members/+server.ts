import { error } from '@sveltejs/kit';
import { personExists } from '$lib/server/auth/users';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { addMember, getSetup, listMembers } from '$lib/server/setups/service';
import { memberSchema } from '$lib/setups/forms';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { userId } = await readJson(event.request, memberSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	if (!(await personExists(db, userId))) error(400, 'userId: no such person');
	await addMember(db, event.params.id, userId);
	return json({ members: await listMembers(db, event.params.id) });
};
