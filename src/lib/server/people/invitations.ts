// Invitations: the only way an account is made without an admin typing a password. The link is
// single-use and expires; only its hash is kept, so a database leak does not leak usable links.
import { randomUUID } from 'node:crypto';
import { and, desc, eq, gt, isNull, sql } from 'drizzle-orm';
import { isRole, type Role } from '../../roles';
import type { Db } from '../db';
import { FieldProblem } from '../http/field-problem';
import { invitations, user } from '../db/schema';
import { hashToken, newSecret } from './secrets';

const INVITE_PREFIX = 'pwi_';

export class InvitationError extends FieldProblem {}

export async function createInvitation(db: Db, input: { email: string; role: Role; invitedBy: string; ttl_s: number }) {
	const email = input.email.toLowerCase();
	const [existing] = await db
		.select({ id: user.id })
		.from(user)
		.where(sql`lower(${user.email}) = ${email}`);
	if (existing) throw new InvitationError('email', 'this address already has an account');
	const { secret, hash } = newSecret(INVITE_PREFIX);
	const [row] = await db
		.insert(invitations)
		.values({
			id: randomUUID(),
			tokenHash: hash,
			email,
			role: input.role,
			invitedBy: input.invitedBy,
			expiresAt: new Date(Date.now() + input.ttl_s * 1000)
		})
		.returning();
	return { invitation: publicInvitation(row), secret };
}

const usable = (now: Date) => and(isNull(invitations.usedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, now));

/** The invitation a link carries, or null when unknown, used, revoked or expired (one answer for all). */
export async function findUsableInvitation(db: Db, secret: string) {
	const [row] = await db
		.select()
		.from(invitations)
		.where(and(eq(invitations.tokenHash, hashToken(secret)), usable(new Date())));
	return row && isRole(row.role) ? { ...publicInvitation(row), role: row.role } : null;
}

/** Marks the link used in one conditional update, so two submits racing cannot both make an account. */
export async function claimInvitation(db: Db, secret: string) {
	const [row] = await db
		.update(invitations)
		.set({ usedAt: new Date() })
		.where(and(eq(invitations.tokenHash, hashToken(secret)), usable(new Date())))
		.returning();
	return row && isRole(row.role) ? { ...publicInvitation(row), role: row.role } : null;
}

/** Gives a claimed link back when making the account failed, so the invitee can try again. */
export async function releaseInvitation(db: Db, id: string) {
	await db.update(invitations).set({ usedAt: null }).where(eq(invitations.id, id));
}

export async function listPendingInvitations(db: Db) {
	const rows = await db
		.select({ invitation: invitations, invitedByName: user.name })
		.from(invitations)
		.leftJoin(user, eq(user.id, invitations.invitedBy))
		.where(usable(new Date()))
		.orderBy(desc(invitations.createdAt));
	return rows.map((r) => ({ ...publicInvitation(r.invitation), invitedByName: r.invitedByName }));
}

export async function findInvitation(db: Db, id: string) {
	const [row] = await db.select().from(invitations).where(eq(invitations.id, id));
	return row ? publicInvitation(row) : null;
}

export async function revokeInvitation(db: Db, id: string) {
	const [row] = await db
		.update(invitations)
		.set({ revokedAt: new Date() })
		.where(and(eq(invitations.id, id), isNull(invitations.usedAt), isNull(invitations.revokedAt)))
		.returning();
	return row ? publicInvitation(row) : null;
}

function publicInvitation(row: typeof invitations.$inferSelect) {
	return { id: row.id, email: row.email, role: row.role, invitedBy: row.invitedBy, createdAt: row.createdAt, expiresAt: row.expiresAt };
}
