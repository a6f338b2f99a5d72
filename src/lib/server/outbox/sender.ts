// What a channel's sender promises the delivery worker.
import type { outbox } from '../db/schema';

export type OutboxRow = typeof outbox.$inferSelect;

export type SendOutcome =
	| { ok: true; ref?: string }
	/**
	 * `retry`: worth trying again later (server down, timeout, 5xx, 429).
	 * `gone`: the destination no longer exists (a push subscription answered 404/410) and was removed.
	 */
	| { ok: false; error: string; retry: boolean; gone?: boolean };

export interface ChannelSender {
	send(row: OutboxRow): Promise<SendOutcome>;
}

export const retryLater = (error: string): SendOutcome => ({ ok: false, error, retry: true });
export const failForGood = (error: string): SendOutcome => ({ ok: false, error, retry: false });
