// The words of a push notification: a short title, one line, the link and an Acknowledge action.
// Kept small: push services cap the encrypted payload at about 4 kB.
import { groupLead, relatedPhrase, type GroupMember } from '../../incidents/group-message';
import { kindLabel } from '../notify/alert-email';
import { acknowledgeLink, incidentLink, type IncidentContext } from './incident-context';
import type { OutboxRow } from './sender';

export type PushMessage = {
	title: string;
	body: string;
	url: string;
	/** One notification per incident on the device: a clear notice replaces its alert. */
	tag: string;
	deliveryId: string;
	actions: { action: 'acknowledge'; title: string; url: string }[];
};

const oneLine = (s: string, max = 140) => {
	const line = s.replace(/\s+/g, ' ').trim();
	return line.length > max ? `${line.slice(0, max - 1)}…` : line;
};

/**
 * `ctx` is the incident the delivery belongs to (its page, what Acknowledge acknowledges); for an
 * alert, `group` is every incident paged together, and the message leads with the group's most
 * telling one and names how many others came with it.
 */
export function pushMessage(row: OutboxRow, ctx: IncidentContext | null, appOrigin: string, group: GroupMember[] = []): PushMessage {
	const p = row.payload;
	if (!ctx) {
		return {
			title: oneLine(String(p.title ?? 'Phasewarden test'), 60),
			body: oneLine(String(p.body ?? 'Push notifications reach this device.')),
			url: `${appOrigin.replace(/\/+$/, '')}/settings`,
			tag: `test-${row.id}`,
			deliveryId: row.id,
			actions: []
		};
	}
	const { incident, setup } = ctx;
	const url = incidentLink(appOrigin, incident.id);
	if (row.kind === 'clear') {
		return {
			title: oneLine(`Cleared: ${kindLabel(incident.kind)} · ${setup.name}`, 60),
			body: oneLine(String(p.clearedSummary ?? 'The condition has cleared.')),
			url,
			tag: incident.id,
			deliveryId: row.id,
			actions: []
		};
	}
	const lead =
		group.length > 1
			? groupLead(group)
			: { id: incident.id, kind: incident.kind, severity: incident.severity, summary: incident.summary, openedAt: incident.openedAt };
	const related = group.length > 1 ? relatedPhrase(group, lead) : '';
	const severity = lead.severity.charAt(0).toUpperCase() + lead.severity.slice(1);
	return {
		title: oneLine(`${severity}: ${kindLabel(lead.kind)} · ${setup.name}`, 60),
		body: oneLine(related ? `${lead.summary} — ${related}` : lead.summary),
		url: incidentLink(appOrigin, lead.id),
		tag: incident.id,
		deliveryId: row.id,
		actions: [{ action: 'acknowledge', title: 'Acknowledge', url: acknowledgeLink(appOrigin, incident.id, row) }]
	};
}
