import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { ROLES } from '$lib/roles';
import { changeRole, RoleChangeError } from '$lib/server/auth/users';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ role: z.enum(ROLES, { message: 'role must be admin, operator or observer' }) });

export const PATCH: RequestHandler = async (event) => {
	const me = requireRole(event, 'admin');
	const { role } = await readJson(event.request, body);
	const { db } = await getRuntime();
	let user;
	try {
		user = await changeRole(db, me.id, event.params.id, role);
	} catch (err) {
		if (err instanceof RoleChangeError) error(400, err.message);
		throw err;
	}
	if (!user) error(404, 'no person with this id');
	return json({ user: { id: user.id, email: user.email, name: user.name, role: user.role } });
};
