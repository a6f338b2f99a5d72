// Tables of the on-call rota, its overrides, the escalation policy and the escalation timers.
// Kept apart from schema.ts so the paging code has one home.
import { index, integer, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './auth-schema';
import { incidents, setups } from './schema';

const at = (name: string) => timestamp(name, { withTimezone: true });

/** One weekly rotation per setup: people in order, handed over at a local weekday and time. */
export const rotas = pgTable('rotas', {
	setupId: text('setup_id')
		.primaryKey()
		.references(() => setups.id, { onDelete: 'cascade' }),
	members: jsonb('members').$type<string[]>().notNull(),
	/** ISO weekday, 1 = Monday … 7 = Sunday, in the lab's time zone. */
	handoverWeekday: integer('handover_weekday').notNull(),
	/** "HH:MM" in the lab's time zone. */
	handoverTime: text('handover_time').notNull(),
	/** "YYYY-MM-DD": members[0] takes the first handover on or after this date. */
	startsOn: text('starts_on').notNull(),
	updatedAt: at('updated_at').notNull().defaultNow(),
	updatedBy: text('updated_by').references(() => user.id, { onDelete: 'set null' })
});

/** "I cover Tuesday night": a person on call instead of the rotation between two instants. */
export const rotaOverrides = pgTable(
	'rota_overrides',
	{
		id: text('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		userId: text('user_id')
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		fromAt: at('from_at').notNull(),
		untilAt: at('until_at').notNull(),
		note: text('note').notNull().default(''),
		createdAt: at('created_at').notNull().defaultNow(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' })
	},
	(t) => [index('rota_overrides_setup_idx').on(t.setupId, t.untilAt)]
);

/** A setup's escalation policy; a setup without a row follows DEFAULT_ESCALATION_POLICY. */
export const escalationPolicies = pgTable('escalation_policies', {
	setupId: text('setup_id')
		.primaryKey()
		.references(() => setups.id, { onDelete: 'cascade' }),
	criticalAckMin: integer('critical_ack_min').notNull().default(10),
	warningAckMin: integer('warning_ack_min').notNull().default(30),
	/** Highest step a warning reaches (1: stop after the secondary). */
	warningLastStep: integer('warning_last_step').notNull().default(1)
});

/**
 * The next page of an unacknowledged incident (the head of its group), written in the transaction
 * that opened it; the scheduler claims it when due. Acknowledging or resolving deletes it.
 */
export const escalations = pgTable(
	'escalations',
	{
		incidentId: text('incident_id')
			.primaryKey()
			.references(() => incidents.id, { onDelete: 'cascade' }),
		nextStep: integer('next_step').notNull(),
		dueAt: at('due_at').notNull(),
		/** The most severe incident of the group decides the policy. */
		severity: text('severity', { enum: ['critical', 'warning', 'info'] }).notNull()
	},
	(t) => [index('escalations_due_idx').on(t.dueAt)]
);

/**
 * A group of setups on one rota: this setup is covered by the rota (and escalation policy) of
 * `rotaSetupId` instead of its own — the fridges of one lab that the same people look after.
 * One level only: a setup that others follow does not itself follow one.
 */
export const rotaShares = pgTable(
	'rota_shares',
	{
		setupId: text('setup_id')
			.primaryKey()
			.references(() => setups.id, { onDelete: 'cascade' }),
		rotaSetupId: text('rota_setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		createdAt: at('created_at').notNull().defaultNow(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' })
	},
	(t) => [index('rota_shares_rota_setup_idx').on(t.rotaSetupId)]
);
