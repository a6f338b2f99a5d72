// The delivery worker over a real (in-memory) database with a fake clock and fake channels:
// retries with backoff until the channel recovers, exactly one success per row, expiry, crash recovery.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { outbox, outboxAttempts } from '../../../src/lib/server/db/schema';
import { enqueue } from '../../../src/lib/server/outbox/enqueue';
import type { ChannelSender, OutboxRow, SendOutcome } from '../../../src/lib/server/outbox/sender';
import { DeliveryWorker, retryDelivery } from '../../../src/lib/server/outbox/worker';

let db: Db;
let close: () => Promise<void>;
let t_ms: number;
const now = () => new Date(t_ms);
const MIN = 60_000;

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
}, 60_000);
afterAll(async () => {
	await close();
});
beforeEach(async () => {
	await db.delete(outbox);
	t_ms = Date.UTC(2026, 0, 5, 3, 0, 0);
});

/** A channel that fails while `down` is true and records every message it accepted. */
function flakyChannel() {
	const accepted: string[] = [];
	const channel = {
		down: true,
		accepted,
		sender: {
			async send(row: OutboxRow): Promise<SendOutcome> {
				if (channel.down) return { ok: false, error: 'ECONNREFUSED', retry: true };
				accepted.push(row.id);
				return { ok: true, ref: `ref-${row.id}` };
			}
		} satisfies ChannelSender
	};
	return channel;
}

const mail = (n: number) => ({ kind: 'test' as const, channel: 'email' as const, recipient: `user-${n}`, payload: {}, dedupeKey: `k${n}` });

describe('DeliveryWorker', () => {
	it('keeps retrying through an outage and delivers every row exactly once afterwards', async () => {
		const smtp = flakyChannel();
		await enqueue(db, [mail(1), mail(2), mail(3)], now());
		const worker = new DeliveryWorker(db, { email: smtp.sender }, { now, random: () => 0.5 });
		// Ten minutes of outage, the worker waking every 30 s as its timer would.
		for (let i = 0; i < 20; i++) {
			await worker.runOnce();
			t_ms += 30_000;
		}
		const during = await db.select().from(outbox);
		expect(during.every((r) => r.status === 'pending' && r.lastError === 'ECONNREFUSED')).toBe(true);
		// Backoff: far fewer attempts than wake-ups.
		expect(during[0].attempts).toBeLessThan(10);
		expect(during[0].attempts).toBeGreaterThan(2);

		smtp.down = false;
		for (let i = 0; i < 40; i++) {
			await worker.runOnce();
			t_ms += 30_000;
		}
		expect(smtp.accepted.sort()).toEqual(during.map((r) => r.id).sort());
		const after = await db.select().from(outbox);
		expect(after.every((r) => r.status === 'sent' && r.providerRef === `ref-${r.id}`)).toBe(true);
		const attempts = await db.select().from(outboxAttempts).where(eq(outboxAttempts.outboxId, after[0].id));
		expect(attempts.length).toBe(after[0].attempts);
		expect(attempts.filter((a) => a.outcome === 'sent')).toHaveLength(1);
	}, 30_000);

	it('queues a dedupe key once, however often it is enqueued', async () => {
		expect(await enqueue(db, [mail(1)], now())).toBe(1);
		expect(await enqueue(db, [mail(1)], now())).toBe(0);
		expect(await db.select().from(outbox)).toHaveLength(1);
	});

	it('gives up when the row expires, and an admin retry brings it back', async () => {
		const smtp = flakyChannel();
		await enqueue(db, [mail(1)], now());
		const worker = new DeliveryWorker(db, { email: smtp.sender }, { now, random: () => 1 });
		// Hourly rounds: each finds the row due again (the wait is capped at ten minutes) until a day has passed.
		for (let i = 0; i < 30; i++) {
			await worker.runOnce();
			t_ms += 60 * MIN;
		}
		const [row] = await db.select().from(outbox);
		expect(row.status).toBe('expired');
		smtp.down = false;
		const retried = await retryDelivery(db, row.id, 24 * 60 * MIN, now());
		expect(retried.row?.status).toBe('pending');
		await worker.runOnce();
		const [sent] = await db.select().from(outbox);
		expect(sent.status).toBe('sent');
		expect(smtp.accepted).toEqual([row.id]);
	}, 30_000);

	it('does not retry a permanent failure', async () => {
		await enqueue(db, [mail(1)], now());
		const refusing: ChannelSender = { send: async () => ({ ok: false, error: '550 no such user', retry: false }) };
		const worker = new DeliveryWorker(db, { email: refusing }, { now });
		await worker.runOnce();
		t_ms += 60 * MIN;
		await worker.runOnce();
		const [row] = await db.select().from(outbox);
		expect(row).toMatchObject({ status: 'failed', attempts: 1, lastError: '550 no such user' });
	});

	it('takes back a row a dead process left mid-send', async () => {
		await enqueue(db, [mail(1)], now());
		await db.update(outbox).set({ status: 'sending', leaseUntil: new Date(t_ms + 10 * MIN), attempts: 1 });
		const smtp = flakyChannel();
		smtp.down = false;
		const worker = new DeliveryWorker(db, { email: smtp.sender }, { now, poll_ms: 3_600_000 });
		await worker.start();
		await worker.wake();
		await worker.stop();
		const [row] = await db.select().from(outbox);
		expect(row).toMatchObject({ status: 'sent', attempts: 2 });
	});

	it('takes back a row whose send hung past its lease', async () => {
		await enqueue(db, [mail(1)], now());
		let calls = 0;
		const hanging: ChannelSender = {
			send: () => {
				calls++;
				return calls === 1 ? new Promise<SendOutcome>(() => {}) : Promise.resolve({ ok: true });
			}
		};
		const worker = new DeliveryWorker(db, { email: hanging }, { now, lease_ms: 2 * MIN });
		void worker.runOnce();
		await new Promise((r) => setTimeout(r, 50));
		t_ms += MIN;
		expect(await worker.runOnce()).toBe(0);
		t_ms += 2 * MIN;
		expect(await worker.runOnce()).toBe(1);
		const [row] = await db.select().from(outbox);
		expect(row.status).toBe('sent');
	});
});
