// Each person's push devices: registered from their settings page (or by a script), removed by
// them or when the push service says the subscription is gone.
import { randomUUID } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '../db';
import { pushSubscriptions } from '../db/schema';
import { isLoopbackHost } from '../http/loopback';

const base64url = z.string().regex(/^[A-Za-z0-9_-]+=*$/, 'must be base64url');

/** The browser's PushSubscription as JSON, plus a name for the device. */
export const newSubscriptionSchema = z.object({
	endpoint: z.url({ message: 'endpoint must be a URL' }),
	keys: z.object({
		p256dh: base64url.min(80, 'keys.p256dh is too short for a P-256 key'),
		auth: base64url.min(16, 'keys.auth is too short')
	}),
	label: z.string().trim().max(80, 'label is at most 80 characters').default('')
});

/**
 * Push services are https. Plain http is accepted only on this machine while the catchers run,
 * so the endpoint cannot be used to make the server post to arbitrary places.
 */
export function checkEndpoint(endpoint: string, catcherRunning: boolean): string | null {
	const url = new URL(endpoint);
	if (url.protocol === 'https:') return null;
	if (url.protocol === 'http:' && catcherRunning && isLoopbackHost(url.hostname)) return null;
	return 'endpoint must be an https:// URL of a push service';
}

export async function registerSubscription(db: Db, userId: string, input: z.infer<typeof newSubscriptionSchema>) {
	const values = { userId, endpoint: input.endpoint, p256dh: input.keys.p256dh, auth: input.keys.auth, label: input.label };
	// The same browser subscribing again (or after a sign-in as someone else) takes the row over.
	const [row] = await db
		.insert(pushSubscriptions)
		.values({ id: randomUUID(), ...values })
		.onConflictDoUpdate({ target: pushSubscriptions.endpoint, set: values })
		.returning();
	return row;
}

export function listSubscriptions(db: Db, userId: string) {
	return db
		.select({
			id: pushSubscriptions.id,
			endpoint: pushSubscriptions.endpoint,
			label: pushSubscriptions.label,
			createdAt: pushSubscriptions.createdAt,
			lastSentAt: pushSubscriptions.lastSentAt
		})
		.from(pushSubscriptions)
		.where(eq(pushSubscriptions.userId, userId))
		.orderBy(desc(pushSubscriptions.createdAt));
}

export async function removeSubscription(db: Db, userId: string, id: string) {
	const removed = await db
		.delete(pushSubscriptions)
		.where(and(eq(pushSubscriptions.id, id), eq(pushSubscriptions.userId, userId)))
		.returning({ id: pushSubscriptions.id });
	return removed.length > 0;
}
