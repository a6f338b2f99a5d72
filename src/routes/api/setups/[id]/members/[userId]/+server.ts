import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getSetup, listMembers, removeMember } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	await removeMember(db, event.params.id, event.params.userId);
	return json({ members: await listMembers(db, event.params.id) });
};
