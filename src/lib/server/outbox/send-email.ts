// Sends an outbox row by e-mail: alert and clear notices are rendered from the incident at send time.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { user } from '../db/schema';
import { renderIncidentClearedEmail, renderIncidentEmail, type RenderedEmail } from '../notify/alert-email';
import type { Mailer } from '../notify/mailer';
import { acknowledgeLink, loadAlertContext, loadIncidentContext } from './incident-context';
import { failForGood, retryLater, type ChannelSender, type OutboxRow } from './sender';

export function emailSender(db: Db, mailer: Mailer, appOrigin: string): ChannelSender {
	return {
		async send(row) {
			const [person] = await db.select({ email: user.email }).from(user).where(eq(user.id, row.recipient));
			if (!person) return failForGood('the recipient no longer has an account');
			const mail = await render(db, row, appOrigin);
			if ('error' in mail) return failForGood(mail.error);
			const result = await mailer.send({
				to: person.email,
				...mail,
				// The outbox id: a copy sent again after a crash has the same Message-ID.
				messageId: `<${row.id}@outbox.phasewarden>`,
				headers: { 'X-Phasewarden-Delivery': row.id }
			});
			if (result.ok) return { ok: true, ...(result.messageId ? { ref: result.messageId } : {}) };
			return result.permanent ? failForGood(result.error) : retryLater(result.error);
		}
	};
}

async function render(db: Db, row: OutboxRow, appOrigin: string): Promise<RenderedEmail | { error: string }> {
	const p = row.payload;
	if (row.kind === 'test') {
		const text = String(p.body ?? 'This is a test message from Phasewarden.');
		return { subject: String(p.title ?? 'Phasewarden test message'), text, html: `<p>${text.replace(/</g, '&lt;')}</p>` };
	}
	if (!row.incidentId) return { error: `a ${row.kind} e-mail needs an incident` };
	if (row.kind === 'clear') {
		const ctx = await loadIncidentContext(db, row.incidentId);
		if (!ctx) return { error: 'the incident no longer exists' };
		return renderIncidentClearedEmail({
			incident: { ...ctx.incident, evidence: ctx.incident.evidence as Record<string, unknown> },
			run: ctx.run,
			setup: ctx.setup,
			appOrigin,
			// A group's notice is queued when its last member resolved: that moment, not the head's.
			cleared: {
				at: p.groupCleared ? row.createdAt : (ctx.incident.resolvedAt ?? row.createdAt),
				summary: String(p.clearedSummary ?? 'The condition has cleared.')
			}
		});
	}
	// An alert pages for its whole group: it leads with the group's most telling incident and lists
	// them all; the acknowledge link stays with the incident the page belongs to.
	const alert = await loadAlertContext(db, row.incidentId);
	if (!alert) return { error: 'the incident no longer exists' };
	const { lead } = alert;
	return renderIncidentEmail({
		incident: { ...lead.incident, evidence: lead.incident.evidence as Record<string, unknown> },
		run: lead.run,
		setup: lead.setup,
		appOrigin,
		group: alert.group,
		acknowledgeUrl: acknowledgeLink(appOrigin, alert.head.incident.id, row)
	});
}
