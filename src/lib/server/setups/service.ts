// Setups (one cryostat line with its oscillator) and the people who look after them.
import { withLiveProgress } from '../runs/live-progress';
import { randomUUID } from 'node:crypto';
import { and, eq, inArray, ne, sql } from 'drizzle-orm';
import type { Db, Tx } from '../db';
import type { NewSetup } from '../../setups/forms';
import { incidents, runs, setupMembers, setups, user } from '../db/schema';

// The schemas live beside the forms so the browser checks with them too.
export { newSetupSchema, retentionSchema, type NewSetup } from '../../setups/forms';

export async function createSetup(db: Db, input: NewSetup, createdBy: string | null) {
	const [row] = await db
		.insert(setups)
		.values({
			id: randomUUID(),
			name: input.name,
			description: input.description,
			order: input.order,
			states: input.states,
			modeGHz: input.mode_GHz,
			nominalMK: input.nominal_mK,
			createdBy
		})
		.returning();
	if (createdBy) await db.insert(setupMembers).values({ setupId: row.id, userId: createdBy }).onConflictDoNothing();
	return row;
}

export async function getSetup(db: Db, id: string) {
	const [row] = await db.select().from(setups).where(eq(setups.id, id));
	return row ?? null;
}

/** Every setup by name, without run or incident counts (pickers and filters). */
export async function listSetups(db: Db) {
	return db.select().from(setups).orderBy(setups.name);
}

export async function setupNameTaken(db: Db, name: string) {
	const [row] = await db.select({ id: setups.id }).from(setups).where(eq(setups.name, name));
	return Boolean(row);
}

/** Every setup with its open runs and count of unresolved incidents, for the overview. */
export async function listSetupsWithStatus(db: Db) {
	const [all, openRuns, openIncidents] = await Promise.all([
		db.select().from(setups).orderBy(setups.name),
		db.select().from(runs).where(eq(runs.status, 'open')).orderBy(runs.startedAt),
		db
			.select({ setupId: incidents.setupId, severity: incidents.severity, n: sql<number>`count(*)::int` })
			.from(incidents)
			.where(ne(incidents.state, 'resolved'))
			.groupBy(incidents.setupId, incidents.severity)
	]);
	return all.map((s) => ({
		...s,
		openRuns: openRuns.filter((r) => r.setupId === s.id).map(withLiveProgress),
		openIncidents: openIncidents.filter((i) => i.setupId === s.id).reduce((n, i) => n + i.n, 0),
		openCritical: openIncidents.filter((i) => i.setupId === s.id && i.severity === 'critical').reduce((n, i) => n + i.n, 0)
	}));
}

export async function listMembers(db: Tx | Db, setupId: string) {
	return db
		.select({ id: user.id, name: user.name, email: user.email, role: user.role })
		.from(setupMembers)
		.innerJoin(user, eq(user.id, setupMembers.userId))
		.where(eq(setupMembers.setupId, setupId))
		.orderBy(user.name);
}

export async function addMember(db: Db, setupId: string, userId: string) {
	await db.insert(setupMembers).values({ setupId, userId }).onConflictDoNothing();
}

export async function removeMember(db: Db, setupId: string, userId: string) {
	await db.delete(setupMembers).where(and(eq(setupMembers.setupId, setupId), eq(setupMembers.userId, userId)));
}

/** Who is alerted for a setup: its operators and admins (until on-call rotas refine this). */
export async function alertRecipients(db: Tx | Db, setupId: string) {
	const members = await listMembers(db, setupId);
	const acting = members.filter((m) => m.role === 'operator' || m.role === 'admin');
	if (acting.length > 0) return acting;
	// A setup nobody has joined still alerts someone: every operator and admin.
	return db
		.select({ id: user.id, name: user.name, email: user.email, role: user.role })
		.from(user)
		.where(inArray(user.role, ['operator', 'admin']));
}

export async function setRawRetention(db: Db, setupId: string, rawRetentionDays: number | null) {
	const [row] = await db.update(setups).set({ rawRetentionDays }).where(eq(setups.id, setupId)).returning();
	return row ?? null;
}
