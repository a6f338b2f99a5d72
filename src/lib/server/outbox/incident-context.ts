// What a message about an incident needs at send time: the incident with its run and setup.
// Read when sending rather than copied at enqueue, so the rendering lives in one place per channel.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { incidents, runs, setups } from '../db/schema';
import { groupLead, type GroupMember } from '../../incidents/group-message';
import { oneTapLink } from '../alerting/ack-links';
import { incidentGroup } from '../oncall/paging';
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
export function acknowledgeLink(
	appOrigin: string,
	incidentId: string,
	row: Pick<OutboxRow, 'id' | 'createdAt' | 'channel' | 'recipient' | 'payload'>
) {
	const userId = row.channel === 'push' ? String(row.payload.userId ?? '') : row.recipient;
	return oneTapLink(appOrigin, row, incidentId, userId);
}

/**
 * An alert's story at send time: the incident its page belongs to (the group's head, which the
 * acknowledge link acknowledges), the group's members as they stand now, and the member the message
 * leads with ($lib/incidents/group-message). Read when sending, so incidents that joined the group
 * while the page was held for gathering (oncall/paging.ts) are named in it.
 */
export async function loadAlertContext(db: Db, incidentId: string) {
	const head = await loadIncidentContext(db, incidentId);
	if (!head) return null;
	const members = await incidentGroup(db, incidentId);
	const group: GroupMember[] = members.map((m) => ({
		id: m.id,
		kind: m.kind,
		severity: m.severity,
		summary: m.summary,
		openedAt: m.openedAt,
		head: m.head
	}));
	if (group.length < 2) return { head, lead: head, group: [] as GroupMember[] };
	const leadId = groupLead(group).id;
	const lead = leadId === head.incident.id ? head : ((await loadIncidentContext(db, leadId)) ?? head);
	return { head, lead, group };
}
