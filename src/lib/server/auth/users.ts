// Adding people and changing roles: shared by the admin page, the API and the user:add CLI.
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { safeText } from '../../protocol/safe-text';
import { ROLES } from '../../roles';
import type { Db } from '../db';
import { user } from '../db/schema';
import type { Auth } from './options';

export const newUserSchema = z.object({
	email: z.email('email must be a valid e-mail address'),
	name: safeText(z.string().trim().min(1, 'name is required').max(100)),
	role: z.enum(ROLES, { message: 'role must be admin, operator or observer' }),
	password: safeText(z.string().min(8, 'password must have at least 8 characters').max(128))
});
export type NewUser = z.infer<typeof newUserSchema>;

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

export async function listUsers(db: Db) {
	return db
		.select({ id: user.id, email: user.email, name: user.name, role: user.role, createdAt: user.createdAt, banned: user.banned })
		.from(user)
		.orderBy(user.name);
}
