// The words of a push notification: a short title, one line, the link and an Acknowledge action.
// Kept small: push services cap the encrypted payload at about 4 kB.
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

export function pushMessage(row: OutboxRow, ctx: IncidentContext | null, appOrigin: string): PushMessage {
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
	const severity = incident.severity.charAt(0).toUpperCase() + incident.severity.slice(1);
	return {
		title: oneLine(`${severity}: ${kindLabel(incident.kind)} · ${setup.name}`, 60),
		body: oneLine(incident.summary),
		url,
		tag: incident.id,
		deliveryId: row.id,
		actions: [{ action: 'acknowledge', title: 'Acknowledge', url: acknowledgeLink(appOrigin, incident.id, row) }]
	};
}
