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

/** Set by the server's hooks from the socket (or a trusted proxy), never taken from the client as sent. */
export const CLIENT_ADDRESS_HEADER = 'x-phasewarden-client-address';

export function createAuth({ db, secret, baseURL, extraPlugins = [], sendResetPassword, resetPasswordTtl_s }: AuthSettings) {
	const adminPlugin = admin({ ac, roles: accessRoles, defaultRole: 'observer', adminRoles: ['admin'] });
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
		// On in development too. Password sign-in has its own per-account brake (signin-limiter.ts);
		// this one is the library's per-address, per-path window for its other routes.
		rateLimit: { enabled: true, storage: 'memory', customRules: { '/sign-in/email': false } },
		advanced: { ipAddress: { ipAddressHeaders: [CLIENT_ADDRESS_HEADER] } },
		// People are managed through the app's API (/api/users), which holds the app's rules (no admin
		// takes their own role, nobody is impersonated); the plugin's HTTP routes would bypass them.
		// Server code may still call auth.api.* directly.
		disabledPaths: Object.values(adminPlugin.endpoints).map((endpoint) => endpoint.path),
		plugins: [adminPlugin, ...extraPlugins]
	});
}

export type Auth = ReturnType<typeof createAuth>;
