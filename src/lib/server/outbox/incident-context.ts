// What a message about an incident needs at send time: the incident with its run and setup.
// Read when sending rather than copied at enqueue, so the rendering lives in one place per channel.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { incidents, runs, setups } from '../db/schema';

export async function loadIncidentContext(db: Db, incidentId: string) {
	const [row] = await db
		.select({ incident: incidents, run: { id: runs.id, name: runs.name }, setup: { id: setups.id, name: setups.name } })
		.from(incidents)
		.innerJoin(runs, eq(runs.id, incidents.runId))
		.innerJoin(setups, eq(setups.id, incidents.setupId))
		.where(eq(incidents.id, incidentId));
	return row ?? null;
}

export type IncidentContext = NonNullable<Awaited<ReturnType<typeof loadIncidentContext>>>;

export function incidentLink(appOrigin: string, incidentId: string) {
	return `${appOrigin.replace(/\/+$/, '')}/incidents/${encodeURIComponent(incidentId)}`;
}

/**
 * Where a notification's Acknowledge action leads. For now the incident page (acknowledging
 * there needs a sign-in); a signed one-tap link replaces this in one place when it exists.
 */
export function acknowledgeLink(appOrigin: string, incidentId: string, _deliveryId: string) {
	return incidentLink(appOrigin, incidentId);
}
