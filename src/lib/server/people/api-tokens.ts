// Personal API tokens: a script acts as the person who made the token, with that person's role as it
// is now (looked up on every request), so demotion, deactivation and revocation take effect at once.
import { randomUUID } from 'node:crypto';
import { and, desc, eq, isNull } from 'drizzle-orm';
import { isRole } from '../../roles';
import type { SessionUser } from '../auth/session';
import type { Db } from '../db';
import { apiTokens, user } from '../db/schema';
import { hashToken, newSecret } from './secrets';

/** Distinct from agent tokens (pwa_), which only the agent stream accepts. */
export const API_TOKEN_PREFIX = 'pwp_';

export async function createApiToken(db: Db, userId: string, label: string) {
	const { secret, hash } = newSecret(API_TOKEN_PREFIX);
	const [row] = await db
		.insert(apiTokens)
		.values({ id: randomUUID(), userId, label, tokenHash: hash, prefix: secret.slice(0, API_TOKEN_PREFIX.length + 6) })
		.returning();
	return { token: publicApiToken(row), secret };
}

export async function listApiTokens(db: Db, userId: string) {
	const rows = await db
		.select()
		.from(apiTokens)
		.where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
		.orderBy(desc(apiTokens.createdAt));
	return rows.map(publicApiToken);
}

/** Only the owner revokes; someone else's token id answers as if it did not exist. */
export async function revokeApiToken(db: Db, userId: string, id: string) {
	const [row] = await db
		.update(apiTokens)
		.set({ revokedAt: new Date() })
		.where(and(eq(apiTokens.id, id), eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
		.returning();
	return row ? publicApiToken(row) : null;
}

/** The person a presented token acts for, or null when unknown, revoked or the person is deactivated. */
export async function authenticateApiToken(db: Db, secret: string): Promise<{ user: SessionUser; tokenId: string } | null> {
	if (!secret.startsWith(API_TOKEN_PREFIX)) return null;
	const [row] = await db
		.select({ tokenId: apiTokens.id, id: user.id, email: user.email, name: user.name, role: user.role, banned: user.banned })
		.from(apiTokens)
		.innerJoin(user, eq(user.id, apiTokens.userId))
		.where(and(eq(apiTokens.tokenHash, hashToken(secret)), isNull(apiTokens.revokedAt)));
	if (!row || row.banned) return null;
	await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.tokenId));
	return {
		user: { id: row.id, email: row.email, name: row.name, role: isRole(row.role) ? row.role : 'observer' },
		tokenId: row.tokenId
	};
}

function publicApiToken(row: typeof apiTokens.$inferSelect) {
	return { id: row.id, label: row.label, prefix: row.prefix, createdAt: row.createdAt, lastUsedAt: row.lastUsedAt };
}
