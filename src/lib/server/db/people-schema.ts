// Tables for bringing people in and letting scripts act for them: e-mailed invitations and
// personal API tokens. Both keep only a SHA-256 of their secret; the secret is shown or sent once.
import { index, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './auth-schema';

const at = (name: string) => timestamp(name, { withTimezone: true });

export const invitations = pgTable(
	'invitations',
	{
		id: text('id').primaryKey(),
		tokenHash: text('token_hash').notNull().unique(),
		email: text('email').notNull(),
		role: text('role').notNull(),
		invitedBy: text('invited_by').references(() => user.id, { onDelete: 'set null' }),
		createdAt: at('created_at').notNull().defaultNow(),
		expiresAt: at('expires_at').notNull(),
		/** Set when the invitee made their account; a used link never works again. */
		usedAt: at('used_at'),
		revokedAt: at('revoked_at')
	},
	(t) => [index('invitations_email_idx').on(t.email)]
);

export const apiTokens = pgTable(
	'api_tokens',
	{
		id: text('id').primaryKey(),
		/** The token acts as this person with their current role, so demotion or deactivation follows. */
		userId: text('user_id')
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		label: text('label').notNull(),
		tokenHash: text('token_hash').notNull().unique(),
		/** First characters of the secret, so people can tell their tokens apart. */
		prefix: text('prefix').notNull(),
		createdAt: at('created_at').notNull().defaultNow(),
		lastUsedAt: at('last_used_at'),
		revokedAt: at('revoked_at')
	},
	(t) => [index('api_tokens_user_idx').on(t.userId)]
);
