// Reading the outbox for the admin page and GET /api/deliveries: newest first, with each row's attempts.
import { and, desc, eq, getTableColumns, inArray, lt, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '../db';
import { OUTBOX_CHANNELS, OUTBOX_STATUSES, outbox, outboxAttempts, pushSubscriptions, user } from '../db/schema';

export const deliveryQuerySchema = z.object({
	status: z.enum(OUTBOX_STATUSES, { message: `status must be one of ${OUTBOX_STATUSES.join(', ')}` }).optional(),
	channel: z.enum(OUTBOX_CHANNELS, { message: `channel must be one of ${OUTBOX_CHANNELS.join(', ')}` }).optional(),
	incident: z.string().min(1).optional(),
	/** Rows created before this instant (the previous page's last createdAt). */
	before: z.coerce.date({ message: 'before must be a date' }).optional(),
	limit: z.coerce.number().int().min(1).max(200, 'limit is at most 200').default(50)
});
export type DeliveryQuery = z.infer<typeof deliveryQuerySchema>;

export async function listDeliveries(db: Db, q: DeliveryQuery) {
	const filters: SQL[] = [];
	if (q.status) filters.push(eq(outbox.status, q.status));
	if (q.channel) filters.push(eq(outbox.channel, q.channel));
	if (q.incident) filters.push(eq(outbox.incidentId, q.incident));
	if (q.before) filters.push(lt(outbox.createdAt, q.before));
	// The person behind the recipient: the user itself (e-mail, text) or the owner of the push device.
	const rows = await db
		.select({ ...getTableColumns(outbox), recipientName: sql<string | null>`coalesce(${user.name}, owner.name)` })
		.from(outbox)
		.leftJoin(user, eq(user.id, outbox.recipient))
		.leftJoin(pushSubscriptions, eq(pushSubscriptions.id, outbox.recipient))
		.leftJoin(sql`"user" as owner`, sql`owner.id = ${pushSubscriptions.userId}`)
		.where(filters.length ? and(...filters) : undefined)
		.orderBy(desc(outbox.createdAt), desc(outbox.id))
		.limit(q.limit);
	const attempts = rows.length
		? await db
				.select()
				.from(outboxAttempts)
				.where(
					inArray(
						outboxAttempts.outboxId,
						rows.map((r) => r.id)
					)
				)
				.orderBy(outboxAttempts.id)
		: [];
	return rows.map((r) => ({ ...r, attemptLog: attempts.filter((a) => a.outboxId === r.id) }));
}

export type DeliveryView = Awaited<ReturnType<typeof listDeliveries>>[number];
