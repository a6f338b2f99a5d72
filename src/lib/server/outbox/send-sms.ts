// Sends an outbox row as a text message to the recipient's verified number: one short line.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { phoneNumbers } from '../db/schema';
import { kindLabel } from '../notify/alert-email';
import type { SmsClient } from '../sms/client';
import { relatedPhrase } from '../../incidents/group-message';
import { incidentLink, loadAlertContext } from './incident-context';
import { failForGood, retryLater, type ChannelSender } from './sender';

export function smsSender(db: Db, sms: SmsClient, appOrigin: string): ChannelSender {
	return {
		async send(row) {
			const [phone] = await db.select().from(phoneNumbers).where(eq(phoneNumbers.userId, row.recipient));
			if (!phone?.verifiedAt) return failForGood('the recipient has no verified phone number');
			if (!row.incidentId) return failForGood('a text message needs an incident');
			const alert = await loadAlertContext(db, row.incidentId);
			if (!alert) return failForGood('the incident no longer exists');
			// One text for the whole group: it leads with the group's most telling incident.
			const { incident, setup } = alert.lead;
			const related = alert.group.length > 1 ? ` (${relatedPhrase(alert.group, incident)})` : '';
			const body = `Phasewarden ${incident.severity.toUpperCase()}: ${kindLabel(incident.kind)} on ${setup.name}${related}. ${incident.summary.replace(/\s+/g, ' ').slice(0, 160)} ${incidentLink(appOrigin, incident.id)}`;
			const result = await sms.send(phone.number, body);
			if (result.ok) return { ok: true, ref: result.sid };
			return result.permanent ? failForGood(result.error) : retryLater(result.error);
		}
	};
}
