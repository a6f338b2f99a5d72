// Tables of the notification outbox and of the places notifications go (push devices, phone
// numbers, setup webhooks). Kept apart from schema.ts so the delivery code has one home.
import { sql } from 'drizzle-orm';
import { index, integer, jsonb, pgTable, serial, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './auth-schema';
import { setups } from './schema';

const at = (name: string) => timestamp(name, { withTimezone: true });

export const OUTBOX_CHANNELS = ['email', 'push', 'sms', 'webhook'] as const;
export const OUTBOX_STATUSES = ['pending', 'sending', 'sent', 'failed', 'expired'] as const;
export type OutboxChannel = (typeof OUTBOX_CHANNELS)[number];
export type OutboxStatus = (typeof OUTBOX_STATUSES)[number];

/**
 * One notification to deliver, written in the transaction that made it necessary (an incident
 * opened or cleared, a test asked for). The delivery worker moves it pending → sending → sent, or
 * back to pending with a later next_attempt_at, until it is sent, fails for good or expires.
 */
export const outbox = pgTable(
	'outbox',
	{
		id: text('id').primaryKey(),
		// No foreign key: a delivery's history outlives the incident it was about.
		incidentId: text('incident_id'),
		/** alert | clear | test | … (what the message says, not how it travels). */
		kind: text('kind').notNull(),
		channel: text('channel', { enum: OUTBOX_CHANNELS }).notNull(),
		/** A user id (email, sms), a push subscription id (push) or a setup webhook id (webhook). */
		recipient: text('recipient').notNull(),
		payload: jsonb('payload').$type<Record<string, unknown>>().notNull(),
		status: text('status', { enum: OUTBOX_STATUSES }).notNull().default('pending'),
		attempts: integer('attempts').notNull().default(0),
		nextAttemptAt: at('next_attempt_at').notNull().defaultNow(),
		/** While `sending`: after this the worker takes the row back (its sender died or hung). */
		leaseUntil: at('lease_until'),
		expiresAt: at('expires_at')
			.notNull()
			.default(sql`now() + interval '1 day'`),
		lastError: text('last_error'),
		/** What the far side called it (SMTP Message-ID, SMS sid, HTTP status). */
		providerRef: text('provider_ref'),
		sentAt: at('sent_at'),
		createdAt: at('created_at').notNull().defaultNow(),
		/** Same key, same notification: a second insert is ignored, so nothing is queued twice. */
		dedupeKey: text('dedupe_key').notNull().unique()
	},
	(t) => [index('outbox_due_idx').on(t.status, t.nextAttemptAt), index('outbox_incident_idx').on(t.incidentId)]
);

/** Every delivery attempt: when, how long, and what came of it. */
export const outboxAttempts = pgTable(
	'outbox_attempts',
	{
		id: serial('id').primaryKey(),
		outboxId: text('outbox_id')
			.notNull()
			.references(() => outbox.id, { onDelete: 'cascade' }),
		startedAt: at('started_at').notNull().defaultNow(),
		durationMs: integer('duration_ms').notNull(),
		outcome: text('outcome', { enum: ['sent', 'retry', 'failed', 'gone'] }).notNull(),
		error: text('error')
	},
	(t) => [index('outbox_attempts_outbox_idx').on(t.outboxId)]
);

/** A browser or phone that asked for web push, one row per device. */
export const pushSubscriptions = pgTable(
	'push_subscriptions',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		endpoint: text('endpoint').notNull().unique(),
		p256dh: text('p256dh').notNull(),
		auth: text('auth').notNull(),
		label: text('label').notNull().default(''),
		createdAt: at('created_at').notNull().defaultNow(),
		lastSentAt: at('last_sent_at')
	},
	(t) => [index('push_subscriptions_user_idx').on(t.userId)]
);

/** A person's phone number for texts; only a verified number gets alerts. */
export const phoneNumbers = pgTable('phone_numbers', {
	userId: text('user_id')
		.primaryKey()
		.references(() => user.id, { onDelete: 'cascade' }),
	number: text('number').notNull(),
	verifiedAt: at('verified_at'),
	/** sha256 of the pending code (never the code itself). */
	codeHash: text('code_hash'),
	codeExpiresAt: at('code_expires_at'),
	codeAttempts: integer('code_attempts').notNull().default(0),
	updatedAt: at('updated_at').notNull().defaultNow()
});

/** An outgoing webhook of a setup: signed JSON POSTs for labs that route alerts elsewhere. */
export const setupWebhooks = pgTable(
	'setup_webhooks',
	{
		id: text('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		url: text('url').notNull(),
		secret: text('secret').notNull(),
		label: text('label').notNull().default(''),
		createdAt: at('created_at').notNull().defaultNow(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' })
	},
	(t) => [index('setup_webhooks_setup_idx').on(t.setupId)]
);
