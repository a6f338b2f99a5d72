// Silences: while one is active for a setup, a run or a rule, incidents still open and are
// recorded but the outbox pages nobody about them.
import { randomUUID } from 'node:crypto';
import { aliasedTable, and, desc, eq, gt, isNull, lte, or, type SQL } from 'drizzle-orm';
import type { SilenceInput } from '../../alerting/silence-form';
import type { Db, Tx } from '../db';
import { runs, setups, silences, user } from '../db/schema';

export class SilenceError extends Error {
	constructor(
		public status: 400 | 404 | 409,
		message: string
	) {
		super(message);
	}
}

const activeAt = (at: Date): SQL => and(isNull(silences.endedAt), lte(silences.startsAt, at), gt(silences.until, at))!;

export async function createSilence(db: Db, input: SilenceInput, userId: string, now = new Date()) {
	const [setup] = await db.select({ id: setups.id }).from(setups).where(eq(setups.id, input.setupId));
	if (!setup) throw new SilenceError(404, `no setup with id ${input.setupId}`);
	if (input.runId) {
		const [run] = await db.select({ setupId: runs.setupId }).from(runs).where(eq(runs.id, input.runId));
		if (!run) throw new SilenceError(404, `no run with id ${input.runId}`);
		if (run.setupId !== input.setupId) throw new SilenceError(400, 'that run belongs to another setup');
	}
	const [row] = await db
		.insert(silences)
		.values({
			id: randomUUID(),
			setupId: input.setupId,
			runId: input.runId || null,
			kind: input.kind || null,
			reason: input.reason,
			startsAt: now,
			until: new Date(now.getTime() + input.duration_min * 60_000),
			createdBy: userId,
			createdAt: now
		})
		.returning();
	return row;
}

export async function endSilence(db: Db, id: string, userId: string, now = new Date()) {
	const [row] = await db.select().from(silences).where(eq(silences.id, id));
	if (!row) throw new SilenceError(404, 'no silence with this id');
	if (row.endedAt || row.until <= now) throw new SilenceError(409, 'this silence has already ended');
	const [ended] = await db.update(silences).set({ endedAt: now, endedBy: userId }).where(eq(silences.id, id)).returning();
	return ended;
}

const creator = aliasedTable(user, 'silence_creator');
const ender = aliasedTable(user, 'silence_ender');

/** Every silence, newest first, with who set it and why; `active` says whether it holds at `now`. */
export async function listSilences(db: Db, opts: { setupId?: string; runId?: string; activeOnly?: boolean } = {}, now = new Date()) {
	const filters: SQL[] = [];
	if (opts.setupId) filters.push(eq(silences.setupId, opts.setupId));
	if (opts.runId) filters.push(or(isNull(silences.runId), eq(silences.runId, opts.runId))!);
	if (opts.activeOnly) filters.push(activeAt(now));
	const rows = await db
		.select({
			id: silences.id,
			setupId: silences.setupId,
			setupName: setups.name,
			runId: silences.runId,
			runName: runs.name,
			kind: silences.kind,
			reason: silences.reason,
			startsAt: silences.startsAt,
			until: silences.until,
			endedAt: silences.endedAt,
			createdByName: creator.name,
			endedByName: ender.name
		})
		.from(silences)
		.innerJoin(setups, eq(setups.id, silences.setupId))
		.leftJoin(runs, eq(runs.id, silences.runId))
		.leftJoin(creator, eq(creator.id, silences.createdBy))
		.leftJoin(ender, eq(ender.id, silences.endedBy))
		.where(filters.length ? and(...filters) : undefined)
		.orderBy(desc(silences.createdAt))
		.limit(200);
	return rows.map((r) => ({ ...r, active: !r.endedAt && r.startsAt <= now && r.until > now }));
}
export type SilenceView = Awaited<ReturnType<typeof listSilences>>[number];

/** The silences holding on a run at `at` (its setup's, its own, and rules silenced on either); for the run page and timeline. */
export function activeSilences(db: Db, runId: string, at: Date = new Date()) {
	return db
		.select({
			id: silences.id,
			kind: silences.kind,
			runId: silences.runId,
			reason: silences.reason,
			startsAt: silences.startsAt,
			until: silences.until,
			createdByName: creator.name
		})
		.from(silences)
		.innerJoin(runs, eq(runs.setupId, silences.setupId))
		.leftJoin(creator, eq(creator.id, silences.createdBy))
		.where(and(eq(runs.id, runId), or(isNull(silences.runId), eq(silences.runId, runId)), activeAt(at)))
		.orderBy(silences.until);
}

/** The active silence that covers this incident, if any (read in the transaction that would page). */
export async function silenceCovering(tx: Tx | Db, incident: { setupId: string; runId: string; kind: string }, at: Date) {
	const [row] = await tx
		.select({ id: silences.id, reason: silences.reason, until: silences.until, createdByName: creator.name })
		.from(silences)
		.leftJoin(creator, eq(creator.id, silences.createdBy))
		.where(
			and(
				eq(silences.setupId, incident.setupId),
				or(isNull(silences.runId), eq(silences.runId, incident.runId)),
				or(isNull(silences.kind), eq(silences.kind, incident.kind)),
				activeAt(at)
			)
		)
		.orderBy(desc(silences.until))
		.limit(1);
	return row ?? null;
}

/** Every silence that ever covered a run (its own and its setup's), newest first; for the run timeline. */
export function silencesOfRun(db: Db, runId: string) {
	return db
		.select({
			id: silences.id,
			kind: silences.kind,
			reason: silences.reason,
			startsAt: silences.startsAt,
			until: silences.until,
			endedAt: silences.endedAt,
			createdByName: creator.name
		})
		.from(silences)
		.innerJoin(runs, eq(runs.setupId, silences.setupId))
		.leftJoin(creator, eq(creator.id, silences.createdBy))
		.where(and(eq(runs.id, runId), or(isNull(silences.runId), eq(silences.runId, runId))))
		.orderBy(desc(silences.startsAt))
		.limit(200);
}
