import { listUsers } from '$lib/server/auth/users';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Who can be made a member of a setup: names and roles for operators (managing people stays with admins). */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	const people = await listUsers(db);
	return json({ people: people.map(({ id, name, email, role }) => ({ id, name, email, role })) });
};
