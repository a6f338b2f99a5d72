// What happens to alerts when an incident opens, is acknowledged or resolves: grouping, the first
// page (step 0) and the escalation timer, all in the caller's transaction so they commit with it.
//
// One cause, one page. A lock loss opens several incidents within seconds (a burst, the occupancy,
// the drift, the lock itself), in no fixed order. The first to open heads the group and queues its
// page, but the page is held for a short gathering window (PHASEWARDEN_GROUP_GATHER_S, 10 s by
// default) before the worker may send it; incidents that join meanwhile queue nothing of their own,
// and every channel renders the group as it stands at send time (outbox/incident-context.ts), so
// each person gets ONE notification per channel that names them all. We hold rather than send at
// once and follow up, because a second message seconds later is exactly the noise grouping is for,
// and a sent e-mail or text cannot be amended; ten seconds is small next to the minutes anyone
// needs to reach a cryostat. A member that joins later than the window is still linked to the
// group (the window below is 60 s) and shows on the incident pages and in escalations, but does
// not page again — unless it makes the group more severe: then the head's first page is queued
// again at the new severity, and the dedupe keys let through only what is new (a text for a
// critical, a person whose quiet hours held back the warning), never a second e-mail or push.
import { and, eq, inArray, ne } from 'drizzle-orm';
import { moreSevere, nextEscalation, type Severity } from '../../oncall/escalation';
import { kindLabel } from '../../incidents/kinds';
import type { Db, Tx } from '../db';
import { escalations, incidentEvents, incidents } from '../db/schema';
import type { IncidentRow } from '../incidents/service';
import { queueIncidentNotices } from '../outbox/enqueue';
import { chooseRecipients } from '../outbox/recipients';
import { pagingNow } from './clock';
import { getPolicy } from './rota-service';

/** Kinds that follow from a lost lock or a silent agent rather than being causes of their own. */
const CONSEQUENCE_KINDS = ['rate_drift', 'switching_burst', 'occupancy_imbalance'];
const CAUSE_KINDS = ['lock_lost', 'agent_silent'];

export function groupWindow_ms(env: NodeJS.ProcessEnv = process.env): number {
	const s = Number(env.PHASEWARDEN_GROUP_WINDOW_S ?? 60);
	if (!Number.isFinite(s) || s < 0)
		throw new RangeError(`PHASEWARDEN_GROUP_WINDOW_S must be a number of seconds ≥ 0, got ${env.PHASEWARDEN_GROUP_WINDOW_S}`);
	return s * 1000;
}

/** The incident a group's page and timer belong to: follow cause links up (at most a few). */
async function headOf(tx: Tx | Db, id: string): Promise<typeof incidents.$inferSelect | null> {
	let current: typeof incidents.$inferSelect | undefined;
	for (let i = 0, next: string | null = id; next && i < 5; i++) {
		[current] = await tx.select().from(incidents).where(eq(incidents.id, next));
		next = current?.causeIncidentId ?? null;
	}
	return current ?? null;
}

/** How long a group's first page waits for the rest of its group (PHASEWARDEN_GROUP_GATHER_S). */
export function gatherWindow_ms(env: NodeJS.ProcessEnv = process.env): number {
	const raw = env.PHASEWARDEN_GROUP_GATHER_S;
	const s = raw === undefined || raw === '' ? 10 : Number(raw);
	if (!Number.isFinite(s) || s < 0) throw new RangeError(`PHASEWARDEN_GROUP_GATHER_S must be a number of seconds ≥ 0, got ${raw}`);
	return s * 1000;
}

/** The held page of a group headed by `head` may go out from this instant (the outbox's clock is the wall clock). */
const gatherUntil = (head: Pick<IncidentRow, 'openedAt'>) => new Date(Math.max(Date.now(), head.openedAt.getTime() + gatherWindow_ms()));

const names = (people: { name: string }[]) => people.map((p) => p.name).join(', ') || 'nobody';

/** Raises (or starts) the head's escalation when a more severe incident joins its group. */
async function raiseGroupSeverity(tx: Tx | Db, head: IncidentRow, severity: Severity, now: Date) {
	const [timer] = await tx.select().from(escalations).where(eq(escalations.incidentId, head.id));
	if (timer) {
		const raised = moreSevere(timer.severity, severity);
		if (raised !== timer.severity) await tx.update(escalations).set({ severity: raised }).where(eq(escalations.incidentId, head.id));
		return;
	}
	if (head.state !== 'open' || moreSevere(head.severity, severity) === head.severity) return;
	const next = nextEscalation(await getPolicy(tx, head.setupId), severity, 0, now.getTime());
	if (next)
		await tx
			.insert(escalations)
			.values({ incidentId: head.id, nextStep: next.step, dueAt: new Date(next.dueAt_ms), severity })
			.onConflictDoNothing();
}

/**
 * A new incident either joins a group (a consequence of an open lock_lost / agent_silent, or a
 * burst on the same run within the window) and notifies nobody, or heads a group of its own:
 * it pages step 0 now and sets its escalation timer.
 */
export async function pageOrGroup(tx: Tx | Db, row: IncidentRow, now: Date = pagingNow()): Promise<IncidentRow> {
	const open = and(eq(incidents.runId, row.runId), ne(incidents.state, 'resolved'), ne(incidents.id, row.id));
	let cause: typeof incidents.$inferSelect | undefined;
	let reason = '';
	if (CONSEQUENCE_KINDS.includes(row.kind)) {
		[cause] = await tx
			.select()
			.from(incidents)
			.where(and(open, inArray(incidents.kind, CAUSE_KINDS)))
			.limit(1);
		reason = 'consequence';
	}
	if (!cause) {
		// A burst is judged on the run's own clock (the agent's frame time) when both incidents
		// carry it, so a replay of a long night does not lump hours together; else on server time.
		const window_ms = groupWindow_ms();
		const candidates = await tx.select().from(incidents).where(open).orderBy(incidents.openedAt);
		const near = (c: typeof incidents.$inferSelect) =>
			c.openedT !== null && row.openedT !== null
				? Math.abs(row.openedT - c.openedT) <= window_ms
				: Date.now() - c.openedAt.getTime() <= window_ms;
		const first = candidates.find(near);
		if (first) {
			cause = first;
			reason = 'burst';
		}
	}
	if (cause) {
		const [linked] = await tx.update(incidents).set({ causeIncidentId: cause.id }).where(eq(incidents.id, row.id)).returning();
		await tx.insert(incidentEvents).values({
			incidentId: row.id,
			action: 'grouped',
			note: `grouped with ${cause.kind}; notifies nobody separately`,
			data: { causeIncidentId: cause.id, reason }
		});
		const head = await headOf(tx, cause.id);
		if (head) {
			const before = (await incidentGroup(tx, head.id))
				.filter((m) => m.id !== row.id)
				.reduce<Severity>((s, m) => moreSevere(s, m.severity), head.severity);
			await raiseGroupSeverity(tx, head, row.severity, now);
			if (moreSevere(before, row.severity) !== before) await pageRaisedGroup(tx, head, row.severity, now);
		}
		return linked;
	}
	const people = await chooseRecipients(tx, row, 0);
	await queueIncidentNotices(tx, row, 'alert', 0, {}, { notBefore: gatherUntil(row) });
	await tx.insert(incidentEvents).values({
		incidentId: row.id,
		action: 'paged',
		note: `paged ${names(people)} at ${now.toISOString()}`,
		data: { step: 0, to: people.map((p) => p.id), at: now.toISOString() }
	});
	const next = nextEscalation(await getPolicy(tx, row.setupId), row.severity, 0, now.getTime());
	if (next)
		await tx
			.insert(escalations)
			.values({ incidentId: row.id, nextStep: next.step, dueAt: new Date(next.dueAt_ms), severity: row.severity });
	return row;
}

/**
 * A more severe incident joined the group: the head's first page again at that severity. Only the
 * channels and people the lower severity left out are new rows (same dedupe keys otherwise); they
 * go out with the held page, or at once when it has gone already.
 */
async function pageRaisedGroup(tx: Tx | Db, head: IncidentRow, severity: Severity, now: Date) {
	if (head.state === 'resolved') return;
	const added = await queueIncidentNotices(tx, { ...head, severity }, 'alert', 0, { raisedTo: severity }, { notBefore: gatherUntil(head) });
	if (added === 0) return;
	const people = await chooseRecipients(tx, { ...head, severity }, 0);
	await tx.insert(incidentEvents).values({
		incidentId: head.id,
		action: 'paged',
		note: `paged ${names(people)} at ${now.toISOString()} as ${severity} (a ${severity} incident joined the group)`,
		data: { step: 0, to: people.map((p) => p.id), at: now.toISOString(), raisedTo: severity, notices: added }
	});
}

/**
 * The clear notice of a resolved incident. A group cleared once, like it paged once: nothing while
 * another member is still unresolved, and when the last one resolves, one notice for the incident
 * that paged (the head), which says the whole group has cleared. An incident alone clears as itself.
 */
export async function queueClearNotice(tx: Tx | Db, row: IncidentRow, clearedSummary: string): Promise<number> {
	const group = await incidentGroup(tx, row.id);
	if (group.length < 2) return queueIncidentNotices(tx, row, 'clear', 0, { clearedSummary });
	if (group.some((m) => m.state !== 'resolved')) return 0;
	const [head] = await tx
		.select()
		.from(incidents)
		.where(eq(incidents.id, group.find((m) => m.head)!.id));
	const summary = `All ${group.length} incidents of this group have cleared; the last: ${kindLabel(row.kind)}: ${clearedSummary}`;
	// At the group's severity, as it paged: whoever the page reached (a critical through quiet hours) hears it cleared.
	const severity = group.reduce<Severity>((s, m) => moreSevere(s, m.severity), head.severity);
	return queueIncidentNotices(tx, { ...head, severity }, 'clear', 0, { clearedSummary: summary, groupCleared: group.length });
}

/** Acknowledging any incident of a group stops the group's escalation; resolving stops (or hands on) its own. */
export async function stopPaging(tx: Tx | Db, row: Pick<IncidentRow, 'id' | 'causeIncidentId'>, why: 'acknowledged' | 'resolved') {
	const ids = [row.id];
	if (why === 'acknowledged') for (const member of await incidentGroup(tx, row.id)) ids.push(member.id);
	if (why === 'resolved') {
		// A group head that clears while the rest of its group is still open (a burst that ended
		// while the lock is still lost) hands its timer to the most severe open member.
		const [timer] = await tx.select().from(escalations).where(eq(escalations.incidentId, row.id));
		if (timer) {
			const members = await tx
				.select()
				.from(incidents)
				.where(and(eq(incidents.causeIncidentId, row.id), eq(incidents.state, 'open')));
			const heir = members.sort((a, b) => (moreSevere(a.severity, b.severity) === a.severity ? -1 : 1))[0];
			if (heir) {
				await tx.update(escalations).set({ incidentId: heir.id }).where(eq(escalations.incidentId, row.id));
				return;
			}
		}
	}
	await tx.delete(escalations).where(inArray(escalations.incidentId, ids));
}

/** The incidents grouped with this one (its head and everything linked under it), oldest first. */
export async function incidentGroup(db: Tx | Db, id: string) {
	const head = await headOf(db, id);
	if (!head) return [];
	const members = [head];
	let frontier = [head.id];
	for (let depth = 0; depth < 4 && frontier.length; depth++) {
		const children = await db.select().from(incidents).where(inArray(incidents.causeIncidentId, frontier));
		members.push(...children);
		frontier = children.map((c) => c.id);
	}
	if (members.length < 2) return [];
	return members
		.sort((a, b) => a.openedAt.getTime() - b.openedAt.getTime())
		.map((m) => ({
			id: m.id,
			kind: m.kind,
			severity: m.severity,
			state: m.state,
			summary: m.summary,
			openedAt: m.openedAt,
			head: m.id === head.id,
			causeIncidentId: m.causeIncidentId
		}));
}
