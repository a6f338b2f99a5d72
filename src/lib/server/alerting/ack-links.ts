// One-tap acknowledge links: made when a notice is rendered, used from /ack/<token>. The secret is
// set once by the runtime (the renderers run deep in the delivery worker, which knows no secret).
// The link's expiry counts from the delivery's creation, so a copy sent again after a crash carries
// the very same link.
import { and, eq } from 'drizzle-orm';
import { signAckToken, verifyAckToken, type AckClaims } from '../../alerting/ack-token';
import type { Db } from '../db';
import { ackLinkUses, incidentEvents, incidents, runs, setups, user } from '../db/schema';

let secret: string | undefined;

export function configureAckLinks(authSecret: string) {
	secret = authSecret;
}

function requireSecret(): string {
	if (!secret) throw new Error('one-tap acknowledge links are not configured (configureAckLinks was never called)');
	return secret;
}

/** PHASEWARDEN_ACK_LINK_TTL_S (seconds; tests shorten it), 24 hours by default. */
export function ackLinkTtl_s(env: NodeJS.ProcessEnv = process.env): number {
	const raw = env.PHASEWARDEN_ACK_LINK_TTL_S;
	const s = raw === undefined || raw === '' ? 24 * 3600 : Number(raw);
	if (!Number.isFinite(s) || s <= 0) throw new Error(`PHASEWARDEN_ACK_LINK_TTL_S must be a positive number of seconds, got "${raw}"`);
	return s;
}

export function oneTapLink(appOrigin: string, delivery: { id: string; createdAt: Date }, incidentId: string, userId: string): string {
	const token = signAckToken(requireSecret(), {
		deliveryId: delivery.id,
		incidentId,
		userId,
		expiresAt_s: Math.floor(delivery.createdAt.getTime() / 1000 + ackLinkTtl_s())
	});
	return `${appOrigin.replace(/\/+$/, '')}/ack/${token}`;
}

export type AckLinkView =
	| {
			ok: true;
			claims: AckClaims;
			incident: { id: string; kind: string; severity: string; summary: string; state: string; setupName: string; runName: string };
			person: string;
	  }
	| { ok: false; message: string };

/** What the confirmation page shows; refuses (with the reason) every link that could not be used. */
export async function inspectAckLink(db: Db, token: string, now = new Date()): Promise<AckLinkView> {
	const v = verifyAckToken(requireSecret(), token, now.getTime());
	if (!v.ok) return v;
	const { claims } = v;
	const [row] = await db
		.select({
			id: incidents.id,
			kind: incidents.kind,
			severity: incidents.severity,
			summary: incidents.summary,
			state: incidents.state,
			setupName: setups.name,
			runName: runs.name
		})
		.from(incidents)
		.innerJoin(runs, eq(runs.id, incidents.runId))
		.innerJoin(setups, eq(setups.id, incidents.setupId))
		.where(eq(incidents.id, claims.incidentId));
	if (!row) return { ok: false, message: 'The incident of this link no longer exists.' };
	const [person] = await db.select({ name: user.name, banned: user.banned }).from(user).where(eq(user.id, claims.userId));
	if (!person || person.banned) return { ok: false, message: 'The person this link was sent to no longer has an active account.' };
	const [used] = await db.select({ usedAt: ackLinkUses.usedAt }).from(ackLinkUses).where(eq(ackLinkUses.deliveryId, claims.deliveryId));
	if (used) return { ok: false, message: `This link was already used (${used.usedAt.toISOString()}); each link works once.` };
	if (row.state === 'resolved') return { ok: false, message: 'This incident is already resolved; there is nothing left to acknowledge.' };
	if (row.state === 'acknowledged') return { ok: false, message: 'This incident is already acknowledged.' };
	return { ok: true, claims, incident: row, person: person.name };
}

export class AckLinkRefused extends Error {}

/**
 * Acknowledges the link's incident as the link's recipient, once. The URL's incident id must match
 * the signed one: a link names the incident it is for and acknowledges nothing else.
 */
export async function useAckLink(db: Db, token: string, now = new Date()) {
	const view = await inspectAckLink(db, token, now);
	if (!view.ok) throw new AckLinkRefused(view.message);
	const { claims } = view;
	return db.transaction(async (tx) => {
		const claimed = await tx
			.insert(ackLinkUses)
			.values({ deliveryId: claims.deliveryId, incidentId: claims.incidentId, userId: claims.userId, usedAt: now })
			.onConflictDoNothing()
			.returning({ id: ackLinkUses.deliveryId });
		if (claimed.length === 0) throw new AckLinkRefused('This link was already used; each link works once.');
		const [updated] = await tx
			.update(incidents)
			.set({ state: 'acknowledged', acknowledgedAt: now, acknowledgedBy: claims.userId })
			.where(and(eq(incidents.id, claims.incidentId), eq(incidents.state, 'open')))
			.returning();
		if (!updated) throw new AckLinkRefused('This incident is no longer open (acknowledged or resolved meanwhile).');
		await tx.insert(incidentEvents).values({
			incidentId: claims.incidentId,
			action: 'acknowledged',
			actorId: claims.userId,
			note: 'via one-tap link',
			data: { via: 'one-tap link', deliveryId: claims.deliveryId }
		});
		return updated;
	});
}
