// What a message about an incident needs at send time: the incident with its run and setup.
// Read when sending rather than copied at enqueue, so the rendering lives in one place per channel.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { incidents, runs, setups } from '../db/schema';
import { oneTapLink } from '../alerting/ack-links';
import type { OutboxRow } from './sender';

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
 * Where a notification's Acknowledge action leads: a signed one-tap link for the person the
 * delivery goes to (an e-mail's recipient is a user id; a push's is a device, its owner in the payload).
 */
export function acknowledgeLink(appOrigin: string, incidentId: string, row: Pick<OutboxRow, 'id' | 'createdAt' | 'channel' | 'recipient' | 'payload'>) {
	const userId = row.channel === 'push' ? String(row.payload.userId ?? '') : row.recipient;
	return oneTapLink(appOrigin, row, incidentId, userId);
}
