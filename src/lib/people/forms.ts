// The people forms' rules, shared by the browser (superforms' client checks) and the server.
import { z } from 'zod';
import { safeText } from '../protocol/safe-text';
import { ROLES, hasRole, type Role } from '../roles';

const password = z.string().min(8, 'password must have at least 8 characters').max(128, 'password must have at most 128 characters');

const samePassword = { path: ['confirm'], message: 'the two passwords differ' };
const matches = (v: { password: string; confirm: string }) => v.password === v.confirm;

export const signInSchema = z.object({
	email: z.email('enter your e-mail address'),
	password: z.string().min(1, 'enter your password')
});

/** An account made by an admin (the admin page, POST /api/users and the user:add CLI). */
export const newUserSchema = z.object({
	email: z.email('email must be a valid e-mail address'),
	name: safeText(z.string().trim().min(1, 'name is required').max(100, 'name must have at most 100 characters')),
	role: z.enum(ROLES, { message: 'role must be admin, operator or observer' }),
	password: safeText(password)
});
export type NewUser = z.infer<typeof newUserSchema>;

export const inviteSchema = z.object({
	email: z.email('email must be a valid e-mail address').max(254).toLowerCase(),
	role: z.enum(ROLES, { message: 'role must be admin, operator or observer' }).default('observer')
});

export const acceptInviteSchema = z
	.object({
		name: z.string().trim().min(1, 'name is required').max(100, 'name must have at most 100 characters'),
		password,
		confirm: z.string()
	})
	.refine(matches, samePassword);

export const forgotPasswordSchema = z.object({ email: z.email('enter your e-mail address').max(254) });

export const resetPasswordSchema = z.object({ password, confirm: z.string() }).refine(matches, samePassword);

export const newApiTokenSchema = z.object({
	label: z.string().trim().min(1, 'label is required: say which script uses it').max(80, 'label must have at most 80 characters')
});

/** Operators bring in colleagues at their own level or below; only admins create admins. */
export function mayInvite(inviter: Role, invitee: Role): boolean {
	return inviter === 'admin' || (hasRole(inviter, 'operator') && invitee !== 'admin');
}
