// Phasewarden's tables. Times from the server clock are timestamptz; times from the agent's clock
// (frame `t`) stay as Unix milliseconds so replays compare exactly what the agent sent.
import { sql } from 'drizzle-orm';
import {
	bigint,
	boolean,
	doublePrecision,
	index,
	integer,
	jsonb,
	pgTable,
	primaryKey,
	serial,
	text,
	timestamp,
	uniqueIndex
} from 'drizzle-orm/pg-core';
import type { AuxAggregate } from '../../rollup/rollup';
import { user } from './auth-schema';

export * from './auth-schema';
export * from './delivery-schema';
export * from './alerting-schema';
export * from './people-schema';
export * from './rota-schema';

const created = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow();

export const setups = pgTable('setups', {
	id: text('id').primaryKey(),
	name: text('name').notNull().unique(),
	description: text('description').notNull().default(''),
	order: integer('order').notNull(),
	states: integer('states').notNull(),
	modeGHz: doublePrecision('mode_ghz').notNull(),
	nominalMK: doublePrecision('nominal_mk').notNull(),
	/** Days raw frames are kept; null keeps them for good. Rollups are never deleted. */
	rawRetentionDays: integer('raw_retention_days'),
	createdAt: created(),
	createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' })
});

/** People who look after a setup; its operators receive the alerts. */
export const setupMembers = pgTable(
	'setup_members',
	{
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		userId: text('user_id')
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		addedAt: created()
	},
	(t) => [primaryKey({ columns: [t.setupId, t.userId] })]
);

export const agentTokens = pgTable(
	'agent_tokens',
	{
		id: text('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		label: text('label').notNull(),
		/** SHA-256 of the secret; the secret itself is shown once and never stored. */
		tokenHash: text('token_hash').notNull().unique(),
		/** First characters of the secret, so people can tell tokens apart. */
		prefix: text('prefix').notNull(),
		createdAt: created(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' }),
		revokedAt: timestamp('revoked_at', { withTimezone: true }),
		revokedBy: text('revoked_by').references(() => user.id, { onDelete: 'set null' }),
		lastUsedAt: timestamp('last_used_at', { withTimezone: true })
	},
	(t) => [index('agent_tokens_setup_idx').on(t.setupId)]
);

export const runs = pgTable(
	'runs',
	{
		id: text('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		key: text('key').notNull(),
		name: text('name').notNull(),
		order: integer('order').notNull(),
		states: integer('states').notNull(),
		modeGHz: doublePrecision('mode_ghz').notNull(),
		operatingPoint: jsonb('operating_point').$type<Record<string, number | string | boolean>>(),
		agent: text('agent').notNull().default(''),
		status: text('status', { enum: ['open', 'ended'] })
			.notNull()
			.default('open'),
		startedAt: created(),
		endedAt: timestamp('ended_at', { withTimezone: true }),
		endReason: text('end_reason'),
		lastSeq: integer('last_seq').notNull().default(0),
		/** Agent clock (ms) of the last committed frame. */
		lastFrameT: bigint('last_frame_t', { mode: 'number' }),
		/** Server clock of the last committed frame: what `agent_silent` watches. */
		lastFrameAt: timestamp('last_frame_at', { withTimezone: true }),
		lastLock: doublePrecision('last_lock'),
		frameCount: integer('frame_count').notNull().default(0),
		/** Seq ranges currently missing (a late frame can shrink or split one). */
		gapCount: integer('gap_count').notNull().default(0)
	},
	(t) => [uniqueIndex('runs_setup_key_idx').on(t.setupId, t.key), index('runs_status_idx').on(t.status)]
);

export const frames = pgTable(
	'frames',
	{
		runId: text('run_id')
			.notNull()
			.references(() => runs.id, { onDelete: 'cascade' }),
		seq: integer('seq').notNull(),
		t: bigint('t', { mode: 'number' }).notNull(),
		windowS: doublePrecision('window_s').notNull(),
		shots: integer('shots').notNull(),
		vacuum: integer('vacuum').notNull(),
		counts: jsonb('counts').$type<number[]>().notNull(),
		lock: doublePrecision('lock').notNull(),
		switches: integer('switches').notNull(),
		dwellS: doublePrecision('dwell_s').notNull(),
		escapes: integer('escapes').notNull(),
		vacuumS: doublePrecision('vacuum_s').notNull(),
		transitions: jsonb('transitions').$type<number[]>(),
		amp: doublePrecision('amp'),
		aux: jsonb('aux').$type<Record<string, number>>(),
		iq: jsonb('iq').$type<{ bins: number; extent: number; counts: number[] }>(),
		/** Server clock at receipt (column created_at), set by the writer: the same value the detectors saw. */
		receivedAt: created(),
		/**
		 * Arrived after a higher seq (it filled a gap): stored, but never fed to the detectors,
		 * so a restart that replays frames after the snapshot skips it exactly as live did.
		 */
		late: boolean('late').notNull().default(false)
	},
	(t) => [primaryKey({ columns: [t.runId, t.seq] })]
);

/**
 * The detector engine's state of a run, saved at a bounded rate (not in every commit). On restart
 * the engine restores it and replays the stored frames after `last_seq`.
 */
export const runSnapshots = pgTable('run_snapshots', {
	runId: text('run_id')
		.primaryKey()
		.references(() => runs.id, { onDelete: 'cascade' }),
	/** The engine's last fed seq when the snapshot was taken. */
	lastSeq: integer('last_seq').notNull(),
	savedAt: timestamp('saved_at', { withTimezone: true }).notNull().defaultNow(),
	state: jsonb('state').notNull()
});

/**
 * Aggregates of a run's frames over fixed buckets of agent time (`bucket_t` = start, ms), written
 * in the same transaction as the frames. What the run timeline reads; never deleted by retention.
 */
export const frameRollups = pgTable(
	'frame_rollups',
	{
		runId: text('run_id')
			.notNull()
			.references(() => runs.id, { onDelete: 'cascade' }),
		resolutionS: integer('resolution_s').notNull(),
		bucketT: bigint('bucket_t', { mode: 'number' }).notNull(),
		frames: integer('frames').notNull(),
		firstSeq: integer('first_seq').notNull(),
		lastSeq: integer('last_seq').notNull(),
		windowS: doublePrecision('window_s').notNull(),
		shots: bigint('shots', { mode: 'number' }).notNull(),
		vacuum: bigint('vacuum', { mode: 'number' }).notNull(),
		counts: jsonb('counts').$type<number[]>().notNull(),
		switches: bigint('switches', { mode: 'number' }).notNull(),
		dwellS: doublePrecision('dwell_s').notNull(),
		escapes: bigint('escapes', { mode: 'number' }).notNull(),
		vacuumS: doublePrecision('vacuum_s').notNull(),
		/** K·K switch counts summed over the frames that carried them; null when none did. */
		transitions: jsonb('transitions').$type<number[]>(),
		lockMin: doublePrecision('lock_min').notNull(),
		lockSum: doublePrecision('lock_sum').notNull(),
		lockMax: doublePrecision('lock_max').notNull(),
		aux: jsonb('aux').$type<Record<string, AuxAggregate>>().notNull(),
		/** Predicted counts from the rate model at each window's temperature; null without a model. */
		expectedSwitches: doublePrecision('expected_switches'),
		expectedEscapes: doublePrecision('expected_escapes')
	},
	(t) => [primaryKey({ columns: [t.runId, t.resolutionS, t.bucketT] })]
);

/** Seq ranges the agent never delivered: lost data, shown on the timeline. */
export const frameGaps = pgTable(
	'frame_gaps',
	{
		id: serial('id').primaryKey(),
		runId: text('run_id')
			.notNull()
			.references(() => runs.id, { onDelete: 'cascade' }),
		fromSeq: integer('from_seq').notNull(),
		toSeq: integer('to_seq').notNull(),
		detectedAt: created()
	},
	(t) => [index('frame_gaps_run_idx').on(t.runId)]
);

export const incidents = pgTable(
	'incidents',
	{
		id: text('id').primaryKey(),
		runId: text('run_id')
			.notNull()
			.references(() => runs.id, { onDelete: 'cascade' }),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		kind: text('kind').notNull(),
		/** Distinguishes several conditions of one kind (e.g. one aux limit per name); '' otherwise. */
		key: text('key').notNull().default(''),
		state: text('state', { enum: ['open', 'acknowledged', 'resolved'] })
			.notNull()
			.default('open'),
		severity: text('severity', { enum: ['critical', 'warning', 'info'] }).notNull(),
		summary: text('summary').notNull(),
		evidence: jsonb('evidence').$type<Record<string, unknown>>().notNull(),
		openedAt: created(),
		openedSeq: integer('opened_seq'),
		/** Agent clock (ms) of the frame that opened it; null for clock-driven kinds. */
		openedT: bigint('opened_t', { mode: 'number' }),
		acknowledgedAt: timestamp('acknowledged_at', { withTimezone: true }),
		acknowledgedBy: text('acknowledged_by').references(() => user.id, { onDelete: 'set null' }),
		resolvedAt: timestamp('resolved_at', { withTimezone: true }),
		resolvedBy: text('resolved_by').references(() => user.id, { onDelete: 'set null' }),
		/** True while the detector still sees the condition. */
		conditionActive: boolean('condition_active').notNull().default(true),
		/**
		 * The incident this one is grouped under: the first of a burst on the run, or the open
		 * lock_lost / agent_silent it is a consequence of. Grouped incidents notify nobody themselves.
		 */
		causeIncidentId: text('cause_incident_id')
	},
	(t) => [
		uniqueIndex('incidents_one_open_idx')
			.on(t.runId, t.kind, t.key)
			.where(sql`${t.state} <> 'resolved'`),
		index('incidents_state_idx').on(t.state),
		index('incidents_run_idx').on(t.runId),
		index('incidents_cause_idx').on(t.causeIncidentId)
	]
);

/** Every change of an incident and every note: who (null for the detector) and when. */
export const incidentEvents = pgTable(
	'incident_events',
	{
		id: serial('id').primaryKey(),
		incidentId: text('incident_id')
			.notNull()
			.references(() => incidents.id, { onDelete: 'cascade' }),
		at: created(),
		action: text('action', {
			enum: ['opened', 'acknowledged', 'resolved', 'condition_cleared', 'auto_resolved', 'note', 'paged', 'escalated', 'grouped']
		}).notNull(),
		actorId: text('actor_id').references(() => user.id, { onDelete: 'set null' }),
		note: text('note'),
		data: jsonb('data').$type<Record<string, unknown>>()
	},
	(t) => [index('incident_events_incident_idx').on(t.incidentId)]
);

/** Every rate model saved for a setup; the newest per process is the one the detectors use. */
export const rateModels = pgTable(
	'rate_models',
	{
		id: serial('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		process: text('process', { enum: ['switching', 'escape'] }).notNull(),
		model: jsonb('model').$type<Record<string, unknown>>().notNull(),
		note: text('note'),
		createdAt: created(),
		createdBy: text('created_by').references(() => user.id, { onDelete: 'set null' })
	},
	(t) => [index('rate_models_setup_idx').on(t.setupId, t.process)]
);

/** The detector rules in force for a setup (absent: the defaults). */
export const setupRules = pgTable('setup_rules', {
	setupId: text('setup_id')
		.primaryKey()
		.references(() => setups.id, { onDelete: 'cascade' }),
	rules: jsonb('rules').$type<Record<string, unknown>>().notNull(),
	updatedAt: created(),
	updatedBy: text('updated_by').references(() => user.id, { onDelete: 'set null' })
});

/** Each changed rule field: who, when, old and new value. */
export const ruleChanges = pgTable(
	'rule_changes',
	{
		id: serial('id').primaryKey(),
		setupId: text('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		at: created(),
		actorId: text('actor_id').references(() => user.id, { onDelete: 'set null' }),
		field: text('field').notNull(),
		oldValue: jsonb('old_value'),
		newValue: jsonb('new_value')
	},
	(t) => [index('rule_changes_setup_idx').on(t.setupId)]
);

/** Notes people pin to a time or span of a run ("helium transfer"), shown on the timeline. */
export const runAnnotations = pgTable(
	'run_annotations',
	{
		id: serial('id').primaryKey(),
		runId: text('run_id')
			.notNull()
			.references(() => runs.id, { onDelete: 'cascade' }),
		/** Agent clock (ms), like frame `t`, so a note lines up with the frames it is about. */
		atMs: bigint('at_ms', { mode: 'number' }).notNull(),
		/** End of the span (agent ms); null for a note at one instant. */
		untilMs: bigint('until_ms', { mode: 'number' }),
		text: text('text').notNull(),
		authorId: text('author_id').references(() => user.id, { onDelete: 'set null' }),
		/** Kept apart from the user row so the note still says who wrote it after they leave. */
		authorName: text('author_name').notNull(),
		createdAt: created()
	},
	(t) => [index('run_annotations_run_idx').on(t.runId, t.atMs)]
);

/** A person's morning report: when (wall clock in a time zone), which setups, and where the schedule stands. */
export const reportSettings = pgTable('report_settings', {
	userId: text('user_id')
		.primaryKey()
		.references(() => user.id, { onDelete: 'cascade' }),
	enabled: boolean('enabled').notNull().default(true),
	/** HH:MM, 24-hour clock. */
	reportTime: text('report_time').notNull().default('08:00'),
	/** IANA zone; null follows the lab's (PHASEWARDEN_TIME_ZONE). */
	timeZone: text('time_zone'),
	/** Setup ids followed; null follows the setups the person is a member of. */
	followSetups: jsonb('follow_setups').$type<string[]>(),
	/** When the schedule started: the first report never reaches back before its report time after this. */
	armedAt: timestamp('armed_at', { withTimezone: true }).notNull().defaultNow(),
	/** End (ms) of the span of the last scheduled report; null before the first. */
	lastReportUntilMs: bigint('last_report_until_ms', { mode: 'number' })
});

/** Every morning report made, scheduled or on demand, kept whole so an old one can be reopened. */
export const morningReports = pgTable(
	'morning_reports',
	{
		id: text('id').primaryKey(),
		userId: text('user_id').references(() => user.id, { onDelete: 'cascade' }),
		kind: text('kind', { enum: ['scheduled', 'on_demand'] }).notNull(),
		sinceMs: bigint('since_ms', { mode: 'number' }).notNull(),
		untilMs: bigint('until_ms', { mode: 'number' }).notNull(),
		timeZone: text('time_zone').notNull(),
		report: jsonb('report').$type<Record<string, unknown>>().notNull(),
		createdAt: created(),
		emailStatus: text('email_status', { enum: ['sent', 'failed', 'skipped'] }),
		emailError: text('email_error')
	},
	(t) => [index('morning_reports_user_idx').on(t.userId, t.untilMs)]
);
