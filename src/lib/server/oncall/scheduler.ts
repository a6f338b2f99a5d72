// Claims due escalation timers and pages the next step. The timers are rows (written with the
// incident), so a restart only delays a step until the first tick after it.
import { asc, eq, lte } from 'drizzle-orm';
import { nextEscalation, stepLevel } from '../../oncall/escalation';
import type { Db } from '../db';
import { escalations, incidentEvents, incidents } from '../db/schema';
import { queueIncidentNotices } from '../outbox/enqueue';
import { chooseRecipients } from '../outbox/recipients';
import { pagingNow } from './clock';
import { incidentGroup } from './paging';
import { getPolicy } from './rota-service';

/** Runs every due step once; returns the incidents it paged. */
export async function escalateDue(db: Db, now: Date = pagingNow(), batch = 50): Promise<{ incidentId: string; step: number }[]> {
	return db.transaction(async (tx) => {
		const due = await tx.select().from(escalations).where(lte(escalations.dueAt, now)).orderBy(asc(escalations.dueAt)).limit(batch);
		const paged: { incidentId: string; step: number }[] = [];
		for (const timer of due) {
			const [incident] = await tx.select().from(incidents).where(eq(incidents.id, timer.incidentId));
			if (!incident || incident.state !== 'open') {
				await tx.delete(escalations).where(eq(escalations.incidentId, timer.incidentId));
				continue;
			}
			// The group's most severe incident decides the channels (a text goes out for critical).
			const asPaged = { ...incident, severity: timer.severity };
			const people = await chooseRecipients(tx, asPaged, timer.nextStep);
			const group = (await incidentGroup(tx, incident.id))
				.filter((g) => !g.head)
				.map((g) => ({ kind: g.kind, severity: g.severity, summary: g.summary }));
			await queueIncidentNotices(tx, asPaged, 'alert', timer.nextStep, { escalated: true, level: stepLevel(timer.nextStep), group });
			await tx.insert(incidentEvents).values({
				incidentId: incident.id,
				action: 'escalated',
				note: `escalated to ${people.map((p) => p.name).join(', ') || 'nobody'} (${stepLevel(timer.nextStep)}) at ${now.toISOString()}`,
				data: { step: timer.nextStep, to: people.map((p) => p.id), at: now.toISOString() }
			});
			paged.push({ incidentId: incident.id, step: timer.nextStep });
			const next = nextEscalation(await getPolicy(tx, incident.setupId), timer.severity, timer.nextStep, now.getTime());
			if (next)
				await tx
					.update(escalations)
					.set({ nextStep: next.step, dueAt: new Date(next.dueAt_ms) })
					.where(eq(escalations.incidentId, incident.id));
			else await tx.delete(escalations).where(eq(escalations.incidentId, incident.id));
		}
		return paged;
	});
}

/** Checks for due steps every `every_ms`; `tick` runs one check now (tests, and after a clock jump). */
export function startEscalation({
	db,
	every_ms,
	onPaged,
	isLeader = () => true
}: {
	db: Db;
	every_ms: number;
	onPaged: () => void;
	/** With several instances, only the leader's timer pages, so a step is paged once. */
	isLeader?: () => boolean;
}) {
	let running: Promise<unknown> = Promise.resolve();
	const tick = () => {
		const run = running.then(async () => {
			const paged = await escalateDue(db);
			if (paged.length) onPaged();
			return paged;
		});
		running = run.catch((err) => console.error('escalation check failed:', err));
		return run;
	};
	const timer = setInterval(() => {
		if (isLeader()) void tick().catch(() => {});
	}, every_ms);
	timer.unref?.();
	return {
		tick,
		async stop() {
			clearInterval(timer);
			await running;
		}
	};
}
export type Escalation = ReturnType<typeof startEscalation>;
