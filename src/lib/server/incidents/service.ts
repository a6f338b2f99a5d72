// Incidents: opened and cleared by the detectors, acknowledged and resolved by operators.
// Every change writes an incident_events row with who (null for the detector) and when.
import { randomUUID } from 'node:crypto';
import { and, asc, count, desc, eq, ne, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { MAX_NOTE_CHARS } from '../../incidents/note-form';
import { safeText } from '../../protocol/safe-text';
import { SEVERITY_RANK } from '../../incidents/severity';
import type { Db, Tx } from '../db';
import { incidentEvents, incidents, runs, setups, user } from '../db/schema';
import { pageOrGroup, queueClearNotice, stopPaging } from '../oncall/paging';

export type IncidentRow = typeof incidents.$inferSelect;

export const INCIDENT_STATES = ['open', 'acknowledged', 'resolved'] as const;
/** The optional note that goes with an acknowledge or resolve. */
export const noteSchema = z.object({
	note: safeText(z.string().trim().max(MAX_NOTE_CHARS, `note is at most ${MAX_NOTE_CHARS} characters`)).optional()
});

export interface OpenCondition {
	kind: string;
	key?: string;
	severity: 'critical' | 'warning' | 'info';
	summary: string;
	evidence: Record<string, unknown>;
	seq?: number;
	t?: number;
}

/** Opens an incident unless one of this run, kind and key is still unresolved (then returns null). */
export async function openIncident(tx: Tx | Db, run: { id: string; setupId: string }, c: OpenCondition) {
	const key = c.key ?? '';
	const [existing] = await tx
		.select({ id: incidents.id })
		.from(incidents)
		.where(and(eq(incidents.runId, run.id), eq(incidents.kind, c.kind), eq(incidents.key, key), ne(incidents.state, 'resolved')));
	if (existing) return null;
	const [row] = await tx
		.insert(incidents)
		.values({
			id: randomUUID(),
			runId: run.id,
			setupId: run.setupId,
			kind: c.kind,
			key,
			severity: c.severity,
			summary: c.summary,
			evidence: c.evidence,
			openedSeq: c.seq ?? null,
			// Agent ms may carry a fraction; stored like the frame's own t (frameToRow) in the bigint column.
			openedT: c.t === undefined || c.t === null ? null : Math.round(c.t)
		})
		.returning();
	await tx.insert(incidentEvents).values({ incidentId: row.id, action: 'opened', data: { summary: c.summary, seq: c.seq ?? null } });
	// In this transaction: the incident, its alerts and its escalation timer commit together or not at all.
	return pageOrGroup(tx, row);
}

/** The detector no longer sees the condition: the incident resolves itself, noted in its history. */
export async function clearCondition(
	tx: Tx | Db,
	runId: string,
	c: { kind: string; key?: string; summary: string; evidence: Record<string, unknown>; seq?: number }
) {
	const [row] = await tx
		.select()
		.from(incidents)
		.where(and(eq(incidents.runId, runId), eq(incidents.kind, c.kind), eq(incidents.key, c.key ?? ''), ne(incidents.state, 'resolved')));
	if (!row) return null;
	const [updated] = await tx
		.update(incidents)
		.set({ state: 'resolved', resolvedAt: new Date(), resolvedBy: null, conditionActive: false })
		.where(eq(incidents.id, row.id))
		.returning();
	await tx.insert(incidentEvents).values({
		incidentId: row.id,
		action: 'auto_resolved',
		note: c.summary,
		data: { seq: c.seq ?? null, evidence: c.evidence }
	});
	await stopPaging(tx, updated, 'resolved');
	await queueClearNotice(tx, updated, c.summary);
	return updated;
}

export class IncidentActionError extends Error {
	constructor(
		public status: 404 | 409,
		message: string
	) {
		super(message);
	}
}

export async function acknowledgeIncident(db: Db, id: string, actorId: string, note?: string) {
	return db.transaction(async (tx) => {
		const [row] = await tx.select().from(incidents).where(eq(incidents.id, id));
		if (!row) throw new IncidentActionError(404, 'no incident with this id');
		if (row.state === 'resolved') throw new IncidentActionError(409, 'the incident is already resolved');
		if (row.state === 'acknowledged') throw new IncidentActionError(409, 'the incident is already acknowledged');
		const [updated] = await tx
			.update(incidents)
			.set({ state: 'acknowledged', acknowledgedAt: new Date(), acknowledgedBy: actorId })
			.where(eq(incidents.id, id))
			.returning();
		await tx.insert(incidentEvents).values({ incidentId: id, action: 'acknowledged', actorId, note: note || null });
		await stopPaging(tx, updated, 'acknowledged');
		return updated;
	});
}

export async function resolveIncident(db: Db, id: string, actorId: string, note?: string) {
	return db.transaction(async (tx) => {
		const [row] = await tx.select().from(incidents).where(eq(incidents.id, id));
		if (!row) throw new IncidentActionError(404, 'no incident with this id');
		if (row.state === 'resolved') throw new IncidentActionError(409, 'the incident is already resolved');
		const [updated] = await tx
			.update(incidents)
			.set({ state: 'resolved', resolvedAt: new Date(), resolvedBy: actorId })
			.where(eq(incidents.id, id))
			.returning();
		await tx.insert(incidentEvents).values({ incidentId: id, action: 'resolved', actorId, note: note || null });
		await stopPaging(tx, updated, 'resolved');
		await queueClearNotice(tx, updated, note ? `Resolved by hand: ${note}` : 'Resolved by hand.');
		return updated;
	});
}

export async function addIncidentNote(db: Db, id: string, actorId: string, note: string) {
	const [row] = await db.select({ id: incidents.id }).from(incidents).where(eq(incidents.id, id));
	if (!row) throw new IncidentActionError(404, 'no incident with this id');
	await db.insert(incidentEvents).values({ incidentId: id, action: 'note', actorId, note });
}

const incidentColumns = {
	id: incidents.id,
	kind: incidents.kind,
	key: incidents.key,
	state: incidents.state,
	severity: incidents.severity,
	summary: incidents.summary,
	evidence: incidents.evidence,
	runId: incidents.runId,
	runName: runs.name,
	setupId: incidents.setupId,
	setupName: setups.name,
	openedAt: incidents.openedAt,
	openedSeq: incidents.openedSeq,
	openedT: incidents.openedT,
	acknowledgedAt: incidents.acknowledgedAt,
	resolvedAt: incidents.resolvedAt,
	conditionActive: incidents.conditionActive
};

export const incidentQuerySchema = z.object({
	state: z.enum(INCIDENT_STATES, { message: 'state must be open, acknowledged or resolved' }).optional(),
	setup: safeText(z.string().min(1)).optional(),
	run: safeText(z.string().min(1)).optional(),
	kind: safeText(z.string().min(1)).optional(),
	sort: z
		.enum(['openedAt', 'severity', 'kind', 'state'], { message: 'sort must be openedAt, severity, kind or state' })
		.default('openedAt'),
	order: z.enum(['asc', 'desc'], { message: 'order must be asc or desc' }).default('desc'),
	page: z.coerce.number().int().min(1, 'page starts at 1').default(1),
	pageSize: z.coerce.number().int().min(1).max(200, 'pageSize is at most 200').default(25)
});
export type IncidentQuery = z.infer<typeof incidentQuerySchema>;

/** Severity as its rank (SEVERITY_RANK), so "descending" means critical, warning, info. */
const severityRank = sql`case ${incidents.severity} ${sql.join(
	Object.entries(SEVERITY_RANK).map(([severity, rank]) => sql`when ${severity} then ${sql.raw(String(rank))}`),
	sql` `
)} end`;

export async function listIncidents(db: Db, q: IncidentQuery) {
	const filters: SQL[] = [];
	if (q.state) filters.push(eq(incidents.state, q.state));
	if (q.setup) filters.push(eq(incidents.setupId, q.setup));
	if (q.run) filters.push(eq(incidents.runId, q.run));
	if (q.kind) filters.push(eq(incidents.kind, q.kind));
	const where = filters.length ? and(...filters) : undefined;
	const sortColumn = { openedAt: incidents.openedAt, severity: severityRank, kind: incidents.kind, state: incidents.state }[q.sort];
	const direction = q.order === 'asc' ? asc : desc;
	const [rows, [{ total }]] = await Promise.all([
		db
			.select(incidentColumns)
			.from(incidents)
			.innerJoin(runs, eq(runs.id, incidents.runId))
			.innerJoin(setups, eq(setups.id, incidents.setupId))
			.where(where)
			.orderBy(direction(sortColumn), desc(incidents.openedAt))
			.limit(q.pageSize)
			.offset((q.page - 1) * q.pageSize),
		db.select({ total: count() }).from(incidents).where(where)
	]);
	return { incidents: rows, total, page: q.page, pageSize: q.pageSize };
}

export async function getIncident(db: Db, id: string) {
	const [row] = await db
		.select(incidentColumns)
		.from(incidents)
		.innerJoin(runs, eq(runs.id, incidents.runId))
		.innerJoin(setups, eq(setups.id, incidents.setupId))
		.where(eq(incidents.id, id));
	if (!row) return null;
	const events = await db
		.select({
			id: incidentEvents.id,
			at: incidentEvents.at,
			action: incidentEvents.action,
			note: incidentEvents.note,
			data: incidentEvents.data,
			actorId: incidentEvents.actorId,
			actorName: user.name
		})
		.from(incidentEvents)
		.leftJoin(user, eq(user.id, incidentEvents.actorId))
		.where(eq(incidentEvents.incidentId, id))
		.orderBy(asc(incidentEvents.at), asc(incidentEvents.id));
	return { incident: row, events };
}
