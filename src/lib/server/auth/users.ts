// Adding people and changing roles: shared by the admin page, the API and the user:add CLI.
import { eq } from 'drizzle-orm';
import type { NewUser } from '../../people/forms';
import { ROLES } from '../../roles';
import type { Db } from '../db';
import { FieldProblem } from '../http/field-problem';
import { user } from '../db/schema';
import type { Auth } from './options';

// The schema lives beside the forms so the browser checks with it too.
export { newUserSchema, type NewUser } from '../../people/forms';

export async function addUser(auth: Auth, input: NewUser) {
	const result = await auth.api.createUser({
		body: { email: input.email, name: input.name, password: input.password, role: input.role }
	});
	return result.user;
}

export async function setUserRole(db: Db, userId: string, role: (typeof ROLES)[number]) {
	const [row] = await db.update(user).set({ role, updatedAt: new Date() }).where(eq(user.id, userId)).returning();
	return row ?? null;
}

export class RoleChangeError extends FieldProblem {}

/** A role change by an admin; null when there is no such person. */
export async function changeRole(db: Db, actingUserId: string, userId: string, role: (typeof ROLES)[number]) {
	// An admin who demotes themself could leave nobody able to manage people.
	if (userId === actingUserId && role !== 'admin') throw new RoleChangeError('role', 'you cannot take the admin role from yourself');
	return setUserRole(db, userId, role);
}

export async function listUsers(db: Db) {
	return db
		.select({ id: user.id, email: user.email, name: user.name, role: user.role, createdAt: user.createdAt, banned: user.banned })
		.from(user)
		.orderBy(user.name);
}

export async function personExists(db: Db, userId: string) {
	const [row] = await db.select({ id: user.id }).from(user).where(eq(user.id, userId));
	return Boolean(row);
}
