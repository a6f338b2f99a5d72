// Sends the alert for an incident to the people who look after its setup, recording each attempt.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { notifications, runs, setups } from '../db/schema';
import type { IncidentRow } from '../incidents/service';
import { renderIncidentEmail } from '../notify/alert-email';
import type { Mailer } from '../notify/mailer';
import { alertRecipients } from '../setups/service';

export interface AlertDispatcher {
	incidentOpened(incident: IncidentRow): Promise<void>;
}

export function createAlertDispatcher(db: Db, mailer: Mailer | null, appOrigin: () => string): AlertDispatcher {
	return {
		async incidentOpened(incident) {
			const [[run], [setup], people] = await Promise.all([
				db.select({ id: runs.id, name: runs.name }).from(runs).where(eq(runs.id, incident.runId)),
				db.select({ id: setups.id, name: setups.name }).from(setups).where(eq(setups.id, incident.setupId)),
				alertRecipients(db, incident.setupId)
			]);
			if (!run || !setup) return;
			const mail = renderIncidentEmail({
				incident: {
					id: incident.id,
					kind: incident.kind,
					severity: incident.severity,
					summary: incident.summary,
					openedAt: incident.openedAt,
					evidence: incident.evidence
				},
				run,
				setup,
				appOrigin: appOrigin()
			});
			for (const person of people) {
				const outcome = mailer
					? await mailer.send({ to: person.email, subject: mail.subject, text: mail.text, html: mail.html })
					: { ok: false as const, error: 'no SMTP server configured (set SMTP_URL or PHASEWARDEN_CATCHER=1)' };
				await db.insert(notifications).values({
					incidentId: incident.id,
					channel: 'email',
					recipient: person.email,
					reason: 'opened',
					status: outcome.ok ? 'sent' : 'failed',
					error: outcome.ok ? null : (outcome.error ?? 'unknown error'),
					messageId: outcome.ok ? (outcome.messageId ?? null) : null
				});
			}
		}
	};
}
