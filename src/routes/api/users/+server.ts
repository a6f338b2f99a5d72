import { error } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { addUser, listUsers, newUserSchema } from '$lib/server/auth/users';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'admin');
	const { db } = await getRuntime();
	return json({ users: await listUsers(db) });
};

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'admin');
	const input = await readJson(event.request, newUserSchema);
	const { auth } = await getRuntime();
	try {
		const user = await addUser(auth, input);
		return json({ user: { id: user.id, email: user.email, name: user.name, role: input.role } }, { status: 201 });
	} catch (err) {
		if (err instanceof APIError) error(400, `email: ${err.message}`);
		throw err;
	}
};
