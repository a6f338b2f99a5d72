// better-auth configuration without SvelteKit imports, so the CLI and the server build the same auth.
import { betterAuth, type BetterAuthPlugin } from 'better-auth';
import { drizzleAdapter } from 'better-auth/adapters/drizzle';
import { admin } from 'better-auth/plugins';
import type { Db } from '../db';
import * as schema from '../db/schema';
import { ac, accessRoles } from './roles';

export interface AuthSettings {
	db: Db;
	secret: string;
	baseURL?: string;
	extraPlugins?: BetterAuthPlugin[];
	/** Mails a reset link; without it (the CLI) password reset is off. */
	sendResetPassword?: (data: { user: { email: string; banned?: boolean | null }; token: string }) => Promise<void>;
	resetPasswordTtl_s?: number;
}

export function createAuth({ db, secret, baseURL, extraPlugins = [], sendResetPassword, resetPasswordTtl_s }: AuthSettings) {
	return betterAuth({
		secret,
		baseURL,
		trustedOrigins: baseURL ? [baseURL] : undefined,
		database: drizzleAdapter(db, {
			provider: 'pg',
			schema: { user: schema.user, session: schema.session, account: schema.account, verification: schema.verification }
		}),
		// Sign-up is closed: people are invited, or added by an admin (admin page or the user:add CLI).
		// A reset signs the person out everywhere: whoever knew the old password loses their session too.
		emailAndPassword: {
			enabled: true,
			disableSignUp: true,
			minPasswordLength: 8,
			sendResetPassword,
			resetPasswordTokenExpiresIn: resetPasswordTtl_s,
			revokeSessionsOnPasswordReset: true
		},
		session: { expiresIn: 60 * 60 * 24 * 14, updateAge: 60 * 60 * 24 },
		telemetry: { enabled: false },
		plugins: [admin({ ac, roles: accessRoles, defaultRole: 'observer', adminRoles: ['admin'] }), ...extraPlugins]
	});
}

export type Auth = ReturnType<typeof createAuth>;
