// A setup's outgoing webhooks. The secret is shown once, when the hook is added; afterwards only
// its first characters, so a screen-share of the setup page does not leak it.
import { randomUUID } from 'node:crypto';
import { and, asc, eq } from 'drizzle-orm';
import { z } from 'zod';
import type { newWebhookSchema } from '../../setups/forms';
import type { Db } from '../db';
import { setupWebhooks } from '../db/schema';
import { newWebhookSecret } from './signature';

export { newWebhookSchema } from '../../setups/forms';

export async function addWebhook(db: Db, setupId: string, input: z.infer<typeof newWebhookSchema>, createdBy: string) {
	const secret = newWebhookSecret();
	const [row] = await db
		.insert(setupWebhooks)
		.values({ id: randomUUID(), setupId, url: input.url, label: input.label, secret, createdBy })
		.returning();
	return { webhook: publicWebhook(row), secret };
}

export async function listWebhooks(db: Db, setupId: string) {
	const rows = await db.select().from(setupWebhooks).where(eq(setupWebhooks.setupId, setupId)).orderBy(asc(setupWebhooks.createdAt));
	return rows.map(publicWebhook);
}

export async function removeWebhook(db: Db, setupId: string, id: string) {
	const removed = await db
		.delete(setupWebhooks)
		.where(and(eq(setupWebhooks.id, id), eq(setupWebhooks.setupId, setupId)))
		.returning({ id: setupWebhooks.id });
	return removed.length > 0;
}

function publicWebhook(row: typeof setupWebhooks.$inferSelect) {
	return { id: row.id, url: row.url, label: row.label, secretPrefix: row.secret.slice(0, 8), createdAt: row.createdAt };
}
