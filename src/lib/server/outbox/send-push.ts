// Sends an outbox row as web push. web-push builds the request (VAPID header, aes128gcm body) and
// fetch sends it, because web-push's own sendNotification insists on TLS, which the loopback
// catcher does not speak; real push services are https and go through the same path.
import { eq } from 'drizzle-orm';
import webpush from 'web-push';
import type { Db } from '../db';
import { pushSubscriptions } from '../db/schema';
import type { VapidKeys } from '../push/vapid';
import { loadAlertContext, loadIncidentContext } from './incident-context';
import { pushMessage } from './push-message';
import { failForGood, retryLater, type ChannelSender } from './sender';

const TIMEOUT_MS = 15_000;

export function pushSender(db: Db, vapid: VapidKeys, appOrigin: string): ChannelSender {
	return {
		async send(row) {
			const [sub] = await db.select().from(pushSubscriptions).where(eq(pushSubscriptions.id, row.recipient));
			if (!sub) return failForGood('the device has been removed');
			const alert = row.incidentId && row.kind === 'alert' ? await loadAlertContext(db, row.incidentId) : null;
			const ctx = alert ? alert.head : row.incidentId ? await loadIncidentContext(db, row.incidentId) : null;
			if (row.incidentId && !ctx) return failForGood('the incident no longer exists');
			const message = pushMessage(row, ctx, appOrigin, alert?.group ?? []);
			const details = webpush.generateRequestDetails(
				{ endpoint: sub.endpoint, keys: { p256dh: sub.p256dh, auth: sub.auth } },
				JSON.stringify(message),
				{
					vapidDetails: vapid,
					contentEncoding: 'aes128gcm',
					TTL: 24 * 3600,
					urgency: row.kind === 'alert' ? 'high' : 'normal',
					// A resend after a crash replaces the first copy on the push service instead of adding one.
					topic: row.id.replace(/-/g, '').slice(0, 32)
				}
			);
			let res: Response;
			try {
				res = await fetch(details.endpoint, {
					method: details.method,
					headers: details.headers as Record<string, string>,
					body: new Uint8Array(details.body),
					signal: AbortSignal.timeout(TIMEOUT_MS)
				});
			} catch (err) {
				return retryLater(`push service unreachable: ${(err as Error).message}`);
			}
			const why = async () => `push service answered ${res.status}${(await res.text().catch(() => '')).slice(0, 200).replace(/^/, ': ')}`;
			if (res.ok) {
				await db.update(pushSubscriptions).set({ lastSentAt: new Date() }).where(eq(pushSubscriptions.id, sub.id));
				return { ok: true, ref: `HTTP ${res.status}` };
			}
			if (res.status === 404 || res.status === 410) {
				// The browser dropped this subscription: it will never work again.
				await db.delete(pushSubscriptions).where(eq(pushSubscriptions.id, sub.id));
				return { ok: false, error: `${await why()} (device removed)`, retry: false, gone: true };
			}
			if (res.status === 429 || res.status >= 500) return retryLater(await why());
			return failForGood(await why());
		}
	};
}
