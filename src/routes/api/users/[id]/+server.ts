import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { ROLES } from '$lib/roles';
import { setUserRole } from '$lib/server/auth/users';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ role: z.enum(ROLES, { message: 'role must be admin, operator or observer' }) });

export const PATCH: RequestHandler = async (event) => {
	const me = requireRole(event, 'admin');
	const { role } = await readJson(event.request, body);
	// An admin who demotes themself could leave nobody able to manage people.
	if (event.params.id === me.id && role !== 'admin') error(400, 'role: you cannot take the admin role from yourself');
	const { db } = await getRuntime();
	const user = await setUserRole(db, event.params.id, role);
	if (!user) error(404, 'no person with this id');
	return json({ user: { id: user.id, email: user.email, name: user.name, role: user.role } });
};
