// Tables of who is paged and how: one-tap acknowledge links that were used, silences for planned
// work, and each person's alert preferences. Apart from schema.ts so alerting has one home.
import { boolean, index, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './auth-schema';
import { runs, setups } from './schema';

const at = (name: string) => timestamp(name, { withTimezone: true });

/**
 * A one-tap acknowledge link that has been used. The link itself is signed, not stored: a row
 * here is what makes it work once (the delivery id is the link's id).
 */
export const ackLinkUses = pgTable('ack_link_uses', {
	deliveryId: text('delivery_id').primaryKey(),
	incidentId: text('incident_id').notNull(),
	userId: text('user_id').notNull(),
	usedAt: at('used_at').notNull().defaultNow()
});

/**
 * "Page nobody about this until …": a setup, one run of it, or one rule (detector kind) on the
 * setup or run. Incidents still open and are recorded; the outbox writes no alert for them.
 */
export const silences = pgTable(
	'silences',
	{
		id: text('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		runId: text('run_id').references(() => runs.id, { onDelete: 'cascade' }),
		/** A detector kind (lock_lost, …); null silences every rule. */
		kind: text('kind'),
		reason: text('reason').notNull(),
		startsAt: at('starts_at').notNull().defaultNow(),
		until: at('until').notNull(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' }),
		createdAt: at('created_at').notNull().defaultNow(),
		endedAt: at('ended_at'),
		endedBy: text('ended_by').references(() => user.id, { onDelete: 'set null' })
	},
	(t) => [index('silences_setup_idx').on(t.setupId, t.until)]
);

/** How a person wants to be told; no row means every channel, every severity, clear notices on. */
export const alertPreferences = pgTable('alert_preferences', {
	userId: text('user_id')
		.primaryKey()
		.references(() => user.id, { onDelete: 'cascade' }),
	channels: jsonb('channels').$type<string[]>().notNull(),
	severities: jsonb('severities').$type<string[]>().notNull(),
	/** "HH:MM" local time; both null means no quiet hours. */
	quietStart: text('quiet_start'),
	quietEnd: text('quiet_end'),
	/** IANA name; null means the lab's time zone. */
	timeZone: text('time_zone'),
	notifyOnClear: boolean('notify_on_clear').notNull().default(true),
	updatedAt: at('updated_at').notNull().defaultNow()
});
