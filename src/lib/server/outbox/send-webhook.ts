// Sends an outbox row to a setup's webhook: a JSON POST signed with the hook's secret.
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { setupWebhooks } from '../db/schema';
import { signWebhook, WEBHOOK_DELIVERY_HEADER, WEBHOOK_SIGNATURE_HEADER, WEBHOOK_TIMESTAMP_HEADER } from '../webhooks/signature';
import { incidentLink, loadAlertContext, loadIncidentContext } from './incident-context';
import { failForGood, retryLater, type ChannelSender } from './sender';

const TIMEOUT_MS = 15_000;

export function webhookSender(db: Db, appOrigin: string, now: () => Date = () => new Date()): ChannelSender {
	return {
		async send(row) {
			const [hook] = await db.select().from(setupWebhooks).where(eq(setupWebhooks.id, row.recipient));
			if (!hook) return failForGood('the webhook has been removed');
			const ctx = row.incidentId ? await loadIncidentContext(db, row.incidentId) : null;
			if (row.incidentId && !ctx) return failForGood('the incident no longer exists');
			// An alert posts once for its group (one cause, one page) and lists the group's incidents.
			const group = row.incidentId && row.kind === 'alert' ? ((await loadAlertContext(db, row.incidentId))?.group ?? []) : [];
			const body = JSON.stringify({
				event: row.kind === 'alert' ? 'incident.opened' : row.kind === 'clear' ? 'incident.resolved' : row.kind,
				delivery: row.id,
				queuedAt: row.createdAt.toISOString(),
				...(ctx
					? {
							incident: {
								id: ctx.incident.id,
								kind: ctx.incident.kind,
								severity: ctx.incident.severity,
								state: ctx.incident.state,
								summary: ctx.incident.summary,
								openedAt: ctx.incident.openedAt.toISOString(),
								resolvedAt: ctx.incident.resolvedAt?.toISOString() ?? null,
								url: incidentLink(appOrigin, ctx.incident.id)
							},
							run: ctx.run,
							setup: ctx.setup,
							...(group.length > 1
								? {
										group: group.map((m) => ({
											id: m.id,
											kind: m.kind,
											severity: m.severity,
											summary: m.summary,
											openedAt: new Date(m.openedAt).toISOString(),
											url: incidentLink(appOrigin, m.id)
										}))
									}
								: {})
						}
					: { message: row.payload })
			});
			const timestamp = String(Math.floor(now().getTime() / 1000));
			let res: Response;
			try {
				res = await fetch(hook.url, {
					method: 'POST',
					headers: {
						'content-type': 'application/json',
						'user-agent': 'Phasewarden-Webhook/1',
						[WEBHOOK_TIMESTAMP_HEADER]: timestamp,
						[WEBHOOK_SIGNATURE_HEADER]: signWebhook(hook.secret, timestamp, body),
						[WEBHOOK_DELIVERY_HEADER]: row.id
					},
					body,
					redirect: 'manual',
					signal: AbortSignal.timeout(TIMEOUT_MS)
				});
			} catch (err) {
				return retryLater(`webhook unreachable: ${(err as Error).message}`);
			}
			await res.body?.cancel().catch(() => {});
			if (res.ok) return { ok: true, ref: `HTTP ${res.status}` };
			const error = `webhook answered HTTP ${res.status}`;
			return res.status === 429 || res.status >= 500 || res.status === 408 ? retryLater(error) : failForGood(error);
		}
	};
}
