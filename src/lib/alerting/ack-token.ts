// One-tap acknowledge tokens: claims (delivery, incident, recipient, expiry) and an HMAC-SHA256 of
// them. Written with node:crypto rather than a JWT package: four fixed claims, one algorithm, no
// header to negotiate, and a token short enough for a text message.
import { createHmac, timingSafeEqual } from 'node:crypto';

export type AckClaims = { deliveryId: string; incidentId: string; userId: string; expiresAt_s: number };

export type AckVerdict =
	{ ok: true; claims: AckClaims } | { ok: false; reason: 'malformed' | 'bad-signature' | 'expired'; message: string };

// A key of its own, derived from the auth secret, so an ack signature can never stand for anything else.
const keyOf = (secret: string) => createHmac('sha256', secret).update('phasewarden one-tap acknowledge v1').digest();

const mac = (secret: string, body: string) => createHmac('sha256', keyOf(secret)).update(body).digest('base64url');

export function signAckToken(secret: string, claims: AckClaims): string {
	if (!secret) throw new Error('signAckToken: the secret is empty');
	const body = Buffer.from(JSON.stringify([claims.deliveryId, claims.incidentId, claims.userId, Math.floor(claims.expiresAt_s)])).toString(
		'base64url'
	);
	return `${body}.${mac(secret, body)}`;
}

export function verifyAckToken(secret: string, token: string, now_ms: number): AckVerdict {
	const parts = token.split('.');
	if (parts.length !== 2 || !parts[0] || !parts[1])
		return { ok: false, reason: 'malformed', message: 'This link is not a Phasewarden acknowledge link (it is cut short or changed).' };
	const [body, sig] = parts;
	const expected = Buffer.from(mac(secret, body));
	const given = Buffer.from(sig);
	if (expected.length !== given.length || !timingSafeEqual(expected, given))
		return {
			ok: false,
			reason: 'bad-signature',
			message: 'This acknowledge link was not signed by this Phasewarden server, or it was changed.'
		};
	let fields: unknown;
	try {
		fields = JSON.parse(Buffer.from(body, 'base64url').toString('utf8'));
	} catch {
		return { ok: false, reason: 'malformed', message: 'This acknowledge link cannot be read.' };
	}
	if (
		!Array.isArray(fields) ||
		fields.length !== 4 ||
		!fields.slice(0, 3).every((f) => typeof f === 'string') ||
		typeof fields[3] !== 'number'
	)
		return { ok: false, reason: 'malformed', message: 'This acknowledge link cannot be read.' };
	const claims: AckClaims = { deliveryId: fields[0], incidentId: fields[1], userId: fields[2], expiresAt_s: fields[3] };
	if (now_ms >= claims.expiresAt_s * 1000)
		return { ok: false, reason: 'expired', message: 'This acknowledge link has expired. Open the incident and acknowledge it there.' };
	return { ok: true, claims };
}
