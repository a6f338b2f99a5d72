// Agent tokens: shown once at creation, stored only as a SHA-256 hash, revocable.
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { and, desc, eq, isNull } from 'drizzle-orm';
import type { Db } from '../db';
import { agentTokens } from '../db/schema';

const TOKEN_PREFIX = 'pwa_';

export function hashToken(secret: string): string {
	return createHash('sha256').update(secret).digest('hex');
}

export async function createAgentToken(db: Db, setupId: string, label: string, createdBy: string | null) {
	const secret = TOKEN_PREFIX + randomBytes(24).toString('base64url');
	const [row] = await db
		.insert(agentTokens)
		.values({
			id: randomUUID(),
			setupId,
			label,
			tokenHash: hashToken(secret),
			prefix: secret.slice(0, TOKEN_PREFIX.length + 6),
			createdBy
		})
		.returning();
	return { token: publicToken(row), secret };
}

/** The setup a presented secret belongs to, or null when unknown or revoked. */
export async function findActiveToken(db: Db, secret: string) {
	const [row] = await db
		.select()
		.from(agentTokens)
		.where(and(eq(agentTokens.tokenHash, hashToken(secret)), isNull(agentTokens.revokedAt)));
	return row ?? null;
}

export async function markTokenUsed(db: Db, id: string) {
	await db.update(agentTokens).set({ lastUsedAt: new Date() }).where(eq(agentTokens.id, id));
}

export async function revokeAgentToken(db: Db, setupId: string, tokenId: string, revokedBy: string) {
	const [row] = await db
		.update(agentTokens)
		.set({ revokedAt: new Date(), revokedBy })
		.where(and(eq(agentTokens.id, tokenId), eq(agentTokens.setupId, setupId), isNull(agentTokens.revokedAt)))
		.returning();
	return row ? publicToken(row) : null;
}

export async function listAgentTokens(db: Db, setupId: string) {
	const rows = await db.select().from(agentTokens).where(eq(agentTokens.setupId, setupId)).orderBy(desc(agentTokens.createdAt));
	return rows.map(publicToken);
}

type TokenRow = typeof agentTokens.$inferSelect;

function publicToken(row: TokenRow) {
	return {
		id: row.id,
		setupId: row.setupId,
		label: row.label,
		prefix: row.prefix,
		createdAt: row.createdAt,
		revokedAt: row.revokedAt,
		lastUsedAt: row.lastUsedAt
	};
}
