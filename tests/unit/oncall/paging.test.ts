// Grouping and escalation timers over a real (in-memory) database: a burst of incidents on one run
// queues one page per person on call; consequences of a lost lock page nobody; an acknowledgement
// deletes the group's timer; a head that clears hands its timer to the group's open incident.
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { escalations, incidents, outbox, runs, setupMembers, user } from '../../../src/lib/server/db/schema';
import { acknowledgeIncident, clearCondition, openIncident } from '../../../src/lib/server/incidents/service';
import { saveRota } from '../../../src/lib/server/oncall/rota-service';
import { escalateDue } from '../../../src/lib/server/oncall/scheduler';
import { createSetup } from '../../../src/lib/server/setups/service';

let db: Db;
let close: () => Promise<void>;
let setupId: string;
const T0 = new Date();
const t0 = 1_796_000_000_000;

async function newRun(key: string) {
	const [run] = await db.insert(runs).values({ id: key, setupId, key, name: key, order: 3, states: 6, modeGHz: 5 }).returning();
	return run;
}
const alertsOf = async (incidentId: string) =>
	db
		.select()
		.from(outbox)
		.where(and(eq(outbox.incidentId, incidentId), eq(outbox.kind, 'alert'), eq(outbox.channel, 'email')));
const open = (run: { id: string; setupId: string }, kind: string, severity: 'critical' | 'warning' | 'info', t: number) =>
	db.transaction((tx) => openIncident(tx, run, { kind, severity, summary: kind, evidence: {}, t }));

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	for (const [id, role] of [
		['ana', 'operator'],
		['ben', 'operator'],
		['cleo', 'admin']
	] as const)
		await db.insert(user).values({ id, name: id, email: `${id}@lab.test`, emailVerified: true, role, createdAt: T0, updatedAt: T0 });
	const setup = await createSetup(db, { name: 'unit fridge', description: '', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 }, null);
	setupId = setup.id;
	for (const userId of ['ana', 'ben', 'cleo']) await db.insert(setupMembers).values({ setupId, userId });
	// Two people: whoever is primary, the other is secondary. The handover is set half a week away
	// (lab time zone UTC here) so no handover falls inside the test's ten minutes.
	const handover = new Date(T0.getTime() + 3.5 * 86_400_000);
	const handoverWeekday = ((handover.getUTCDay() + 6) % 7) + 1;
	await saveRota(
		db,
		setupId,
		{ members: ['ana', 'ben'], handoverWeekday, handoverTime: '00:00', startsOn: '2026-01-01', criticalAckMin: 10, warningAckMin: 30 },
		'cleo'
	);
}, 60_000);
afterAll(async () => {
	await close();
});

describe('grouping', () => {
	it('pages the person on call once for a burst and links the rest', async () => {
		const run = await newRun('burst');
		const burst = (await open(run, 'switching_burst', 'critical', t0))!;
		const lock = (await open(run, 'lock_lost', 'critical', t0 + 4000))!;
		const drift = (await open(run, 'rate_drift', 'warning', t0 + 7000))!;
		const aux = (await open(run, 'aux_limit', 'warning', t0 + 6000))!;
		const pages = await alertsOf(burst.id);
		expect(pages).toHaveLength(1);
		for (const other of [lock, drift, aux]) expect(await alertsOf(other.id)).toHaveLength(0);
		expect(lock.causeIncidentId).toBe(burst.id);
		expect(drift.causeIncidentId).toBe(lock.id); // a consequence of the open lock loss
		expect(aux.causeIncidentId).toBe(burst.id);
		// An incident more than a minute after every open one (on the run's clock) starts a group of its own.
		const later = (await open(run, 'agent_silent', 'warning', t0 + 68_000))!;
		expect(later.causeIncidentId).toBeNull();
		expect(await alertsOf(later.id)).toHaveLength(1);
	});

	it('hands the timer on when the head clears, and stops on acknowledge', async () => {
		const run = await newRun('handoff');
		const burst = (await open(run, 'switching_burst', 'critical', t0))!;
		const lock = (await open(run, 'lock_lost', 'critical', t0 + 3000))!;
		await db.transaction((tx) => clearCondition(tx, run.id, { kind: 'switching_burst', summary: 'burst over', evidence: {} }));
		const [timer] = await db.select().from(escalations).where(eq(escalations.incidentId, lock.id));
		expect(timer?.nextStep).toBe(1);
		expect(await db.select().from(escalations).where(eq(escalations.incidentId, burst.id))).toHaveLength(0);

		const paged = await escalateDue(db, new Date(timer.dueAt.getTime()));
		expect(paged).toContainEqual({ incidentId: lock.id, step: 1 });
		const step1 = (await alertsOf(lock.id)).map((d) => d.recipient);
		expect(step1).toHaveLength(1);
		expect(step1[0]).not.toBe((await alertsOf(burst.id))[0].recipient); // the secondary, not the primary again

		await acknowledgeIncident(db, lock.id, 'ana');
		expect(await db.select().from(escalations).where(eq(escalations.incidentId, lock.id))).toHaveLength(0);
		expect(await escalateDue(db, new Date(timer.dueAt.getTime() + 3_600_000))).not.toContainEqual(
			expect.objectContaining({ incidentId: lock.id })
		);
		const [row] = await db.select().from(incidents).where(eq(incidents.id, lock.id));
		expect(row.state).toBe('acknowledged');
	});
});
