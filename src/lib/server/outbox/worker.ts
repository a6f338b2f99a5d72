// The delivery worker: takes due rows from the outbox, sends each through its channel, records the
// attempt, and schedules a retry with backoff until the row is sent, fails for good or expires.
//
// Delivery is at-least-once. A row is marked `sending` with a lease before its send starts; if the
// process dies mid-send, the row is sent again (at start-up, or when the lease runs out), and the
// far side may then see it twice. Every send carries the outbox id (the e-mail's Message-ID, the
// webhook's X-Phasewarden-Delivery header, the push tag) so such a duplicate can be recognised.
// Because the data folder is locked to one process (data-lock.ts), a row found `sending` at start
// belonged to a process that is gone, and is retried at once instead of waiting for its lease.
// Not so with several instances on one PostgreSQL server: there such a row may be another
// instance's send under way, so unless no other instance is connected it waits for its lease
// (`start(false)`). Claims are safe across
// instances: the claiming UPDATE re-checks that a row is still due once it holds the row's lock.
import { and, eq, inArray, lte, or, sql } from 'drizzle-orm';
import { DEFAULT_BACKOFF, retryDelay_ms, type BackoffPolicy } from '../../outbox/backoff';
import type { Db } from '../db';
import { outbox, outboxAttempts, type OutboxChannel } from '../db/schema';
import type { ChannelSender, OutboxRow, SendOutcome } from './sender';

export interface WorkerOptions {
	now?: () => Date;
	random?: () => number;
	backoff?: BackoffPolicy;
	/** How long a send may take before its row is taken back. */
	lease_ms?: number;
	/** The timer that catches retries coming due (new rows wake the worker at once). */
	poll_ms?: number;
	/** Rows sent concurrently per round. */
	batch?: number;
	/** Called after each attempt is recorded (for the event bus and tests). */
	onAttempt?: (row: OutboxRow, outcome: SendOutcome) => void;
}

export class DeliveryWorker {
	private now: () => Date;
	private random: () => number;
	private backoff: BackoffPolicy;
	private lease_ms: number;
	private poll_ms: number;
	private batch: number;
	private timer: NodeJS.Timeout | null = null;
	private running: Promise<void> | null = null;
	private again = false;
	private stopped = false;

	constructor(
		private db: Db,
		private senders: Partial<Record<OutboxChannel, ChannelSender>>,
		private options: WorkerOptions = {}
	) {
		this.now = options.now ?? (() => new Date());
		this.random = options.random ?? Math.random;
		this.backoff = options.backoff ?? DEFAULT_BACKOFF;
		this.lease_ms = options.lease_ms ?? 120_000;
		this.poll_ms = options.poll_ms ?? 5_000;
		this.batch = options.batch ?? 20;
	}

	/** Takes back rows a dead process left `sending` (unless other instances may be sending them), then starts the timer and a first round. */
	async start(reclaimSending = true) {
		if (reclaimSending)
			await this.db
				.update(outbox)
				.set({ status: 'pending', leaseUntil: null, nextAttemptAt: this.now() })
				.where(eq(outbox.status, 'sending'));
		this.timer = setInterval(() => this.wake(), this.poll_ms);
		this.timer.unref();
		this.wake();
	}

	/** Asks for a round now; rounds never overlap, a wake during one runs another after it. */
	wake(): Promise<void> {
		if (this.stopped) return Promise.resolve();
		if (this.running) {
			this.again = true;
			return this.running;
		}
		this.running = (async () => {
			try {
				do {
					this.again = false;
					while ((await this.runOnce()) === this.batch && !this.stopped);
				} while (this.again && !this.stopped);
			} catch (err) {
				console.error('delivery worker:', err);
			} finally {
				this.running = null;
			}
		})();
		return this.running;
	}

	/** One round: expire what is too old, claim what is due, send it. Returns how many were claimed. */
	async runOnce(): Promise<number> {
		const now = this.now();
		await this.db
			.update(outbox)
			.set({ status: 'expired', leaseUntil: null })
			.where(
				and(
					inArray(outbox.status, ['pending', 'sending']),
					lte(outbox.expiresAt, now),
					or(eq(outbox.status, 'pending'), lte(outbox.leaseUntil, now))
				)
			);
		const claimed = await this.claim(now);
		await Promise.all(claimed.map((row) => this.deliver(row)));
		return claimed.length;
	}

	async stop() {
		this.stopped = true;
		if (this.timer) clearInterval(this.timer);
		await this.running;
	}

	private async claim(now: Date): Promise<OutboxRow[]> {
		const due = or(
			and(eq(outbox.status, 'pending'), lte(outbox.nextAttemptAt, now)),
			and(eq(outbox.status, 'sending'), lte(outbox.leaseUntil, now))
		);
		return this.db.transaction(async (tx) => {
			const ids = await tx.select({ id: outbox.id }).from(outbox).where(due).orderBy(outbox.nextAttemptAt).limit(this.batch);
			if (ids.length === 0) return [];
			return tx
				.update(outbox)
				.set({ status: 'sending', leaseUntil: new Date(now.getTime() + this.lease_ms), attempts: sql`${outbox.attempts} + 1` })
				.where(
					and(
						inArray(
							outbox.id,
							ids.map((r) => r.id)
						),
						due
					)
				)
				.returning();
		});
	}

	private async deliver(row: OutboxRow) {
		const started = this.now();
		const t0 = performance.now();
		let outcome: SendOutcome;
		const sender = this.senders[row.channel];
		try {
			outcome = sender ? await sender.send(row) : { ok: false, error: `no ${row.channel} service is configured`, retry: true };
		} catch (err) {
			// A sender that throws is a bug or an unexpected failure: try again later rather than lose it.
			outcome = { ok: false, error: err instanceof Error ? err.message : String(err), retry: true };
		}
		const duration_ms = Math.round(performance.now() - t0);
		const finished = this.now();
		await this.db.transaction(async (tx) => {
			await tx.insert(outboxAttempts).values({
				outboxId: row.id,
				startedAt: started,
				durationMs: duration_ms,
				outcome: outcome.ok ? 'sent' : outcome.gone ? 'gone' : outcome.retry ? 'retry' : 'failed',
				error: outcome.ok ? null : outcome.error
			});
			await tx
				.update(outbox)
				.set(this.nextState(row, outcome, finished))
				.where(eq(outbox.id, row.id));
		});
		this.options.onAttempt?.(row, outcome);
	}

	private nextState(row: OutboxRow, outcome: SendOutcome, now: Date): Partial<OutboxRow> {
		if (outcome.ok) return { status: 'sent', sentAt: now, leaseUntil: null, lastError: null, providerRef: outcome.ref ?? null };
		if (!outcome.retry) return { status: 'failed', leaseUntil: null, lastError: outcome.error };
		const next = new Date(now.getTime() + retryDelay_ms(row.attempts, this.backoff, this.random));
		if (next >= row.expiresAt) return { status: 'expired', leaseUntil: null, lastError: outcome.error };
		return { status: 'pending', leaseUntil: null, lastError: outcome.error, nextAttemptAt: next };
	}
}

/** An admin's retry: due now, with a fresh expiry if it had run out. Refused while a send is in flight. */
export async function retryDelivery(db: Db, id: string, expiry_ms: number, now: Date = new Date()) {
	const [row] = await db.select().from(outbox).where(eq(outbox.id, id));
	if (!row) return { row: null, error: 404, message: 'no delivery with this id' };
	if (row.status === 'sending') return { row: null, error: 409, message: 'this delivery is being sent right now' };
	const expiresAt = row.expiresAt > now ? row.expiresAt : new Date(now.getTime() + expiry_ms);
	const [updated] = await db
		.update(outbox)
		.set({ status: 'pending', nextAttemptAt: now, expiresAt, leaseUntil: null })
		.where(eq(outbox.id, id))
		.returning();
	return { row: updated };
}
