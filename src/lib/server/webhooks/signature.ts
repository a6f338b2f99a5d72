// How a webhook receiver knows a POST came from this server: an HMAC-SHA256, keyed with the hook's
// secret, over "<timestamp>.<raw body>". The timestamp is signed too, so a captured request cannot
// be replayed later with a fresh timestamp; receivers should refuse timestamps minutes old.
//
//   X-Phasewarden-Timestamp: 1767225600
//   X-Phasewarden-Signature: sha256=<hex of HMAC-SHA256(secret, "1767225600." + body)>
//   X-Phasewarden-Delivery:  <outbox id> (the same on a retry: drop duplicates by it)
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';

export const WEBHOOK_SIGNATURE_HEADER = 'X-Phasewarden-Signature';
export const WEBHOOK_TIMESTAMP_HEADER = 'X-Phasewarden-Timestamp';
export const WEBHOOK_DELIVERY_HEADER = 'X-Phasewarden-Delivery';

export function signWebhook(secret: string, timestamp: string, body: string): string {
	return `sha256=${createHmac('sha256', secret).update(`${timestamp}.${body}`).digest('hex')}`;
}

export function verifyWebhook(secret: string, timestamp: string, body: string, signature: string): boolean {
	const expected = Buffer.from(signWebhook(secret, timestamp, body));
	const given = Buffer.from(signature);
	return expected.length === given.length && timingSafeEqual(expected, given);
}

export function newWebhookSecret(): string {
	return `pwh_${randomBytes(24).toString('base64url')}`;
}
