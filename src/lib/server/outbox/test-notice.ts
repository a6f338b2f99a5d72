// "Send me a test": one push to each of the person's devices, through the outbox like any alert.
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { pushSubscriptions } from '../db/schema';
import { enqueue } from './enqueue';

export async function queueTestPush(db: Db, userId: string): Promise<number> {
	const devices = await db.select({ id: pushSubscriptions.id }).from(pushSubscriptions).where(eq(pushSubscriptions.userId, userId));
	const batch = randomUUID();
	return enqueue(
		db,
		devices.map((d) => ({
			kind: 'test' as const,
			channel: 'push' as const,
			recipient: d.id,
			payload: { title: 'Phasewarden test', body: 'Alerts will reach this device.', userId },
			dedupeKey: `test:${batch}:push:${d.id}`
		}))
	);
}
