// Writes notifications into the outbox. Callers pass their transaction: a notification exists
// exactly when the change that caused it was committed, so a crash can lose neither one alone.
import { randomUUID } from 'node:crypto';
import { and, eq, inArray, isNotNull } from 'drizzle-orm';
import type { Db, Tx } from '../db';
import { outbox, phoneNumbers, pushSubscriptions, setupWebhooks, type OutboxChannel } from '../db/schema';
import type { IncidentRow } from '../incidents/service';
import { allowedChannels, noticeSilenced } from '../alerting/notice-filter';
import { pagingNow } from '../oncall/clock';
import { chooseRecipients } from './recipients';
import { outboxExpiry_ms } from './settings';

export type OutboxKind = 'alert' | 'clear' | 'test';

export interface NewDelivery {
	incidentId?: string | null;
	kind: OutboxKind;
	channel: OutboxChannel;
	recipient: string;
	payload: Record<string, unknown>;
	/** Same key twice, one delivery: a repeated enqueue (a retried commit, a replay) sends nothing more. */
	dedupeKey: string;
}

/**
 * Inserts the deliveries not queued already; returns how many were new. `notBefore` holds them
 * back until then (a group's first page waits for the rest of its group, see oncall/paging.ts).
 */
export async function enqueue(tx: Tx | Db, deliveries: NewDelivery[], now: Date = new Date(), notBefore: Date = now): Promise<number> {
	if (deliveries.length === 0) return 0;
	const expiresAt = new Date(now.getTime() + outboxExpiry_ms());
	const nextAttemptAt = notBefore.getTime() > now.getTime() ? notBefore : now;
	const inserted = await tx
		.insert(outbox)
		.values(deliveries.map((d) => ({ id: randomUUID(), ...d, incidentId: d.incidentId ?? null, nextAttemptAt, expiresAt, createdAt: now })))
		.onConflictDoNothing({ target: outbox.dedupeKey })
		.returning({ id: outbox.id });
	return inserted.length;
}

type IncidentNoticeSource = Pick<IncidentRow, 'id' | 'setupId' | 'runId' | 'kind' | 'severity' | 'summary'>;

/**
 * The notices for an incident that opened (`alert`) or resolved (`clear`): e-mail and every push
 * device of each recipient, a text for critical alerts to a verified number, and each webhook of
 * the setup. `step` is the escalation step (0 when the incident opens); `notBefore` holds them back.
 */
export async function queueIncidentNotices(
	tx: Tx | Db,
	incident: IncidentNoticeSource,
	kind: 'alert' | 'clear',
	step = 0,
	extra: Record<string, unknown> = {},
	{ notBefore }: { notBefore?: Date } = {}
): Promise<number> {
	const now = new Date();
	// Silences and personal preferences (src/lib/server/alerting) decide before any row is written.
	if (await noticeSilenced(tx, incident, kind, step, now)) return 0;
	const people = await chooseRecipients(tx, incident, step);
	const ids = people.map((p) => p.id);
	// Quiet hours are read on the paging clock (the wall clock, unless a test sets it), like the rota.
	const allows = await allowedChannels(tx, ids, incident.severity, kind, pagingNow());
	const [devices, phones, hooks] = await Promise.all([
		ids.length
			? tx
					.select({ id: pushSubscriptions.id, userId: pushSubscriptions.userId })
					.from(pushSubscriptions)
					.where(inArray(pushSubscriptions.userId, ids))
			: [],
		ids.length && kind === 'alert' && incident.severity === 'critical'
			? tx
					.select({ userId: phoneNumbers.userId })
					.from(phoneNumbers)
					.where(and(inArray(phoneNumbers.userId, ids), isNotNull(phoneNumbers.verifiedAt)))
			: [],
		tx.select({ id: setupWebhooks.id }).from(setupWebhooks).where(eq(setupWebhooks.setupId, incident.setupId))
	]);
	const summary = {
		step,
		severity: incident.severity,
		incidentKind: incident.kind,
		summary: incident.summary,
		runId: incident.runId,
		...extra
	};
	const key = (channel: OutboxChannel, recipient: string) => `${kind}:${incident.id}:${step}:${channel}:${recipient}`;
	const row = (channel: OutboxChannel, recipient: string, extra: Record<string, unknown> = {}): NewDelivery => ({
		incidentId: incident.id,
		kind,
		channel,
		recipient,
		payload: { ...summary, ...extra },
		dedupeKey: key(channel, recipient)
	});
	const deliveries: NewDelivery[] = [];
	for (const person of people) {
		if (allows(person.id, 'email')) deliveries.push(row('email', person.id, { address: person.email }));
		for (const d of devices)
			if (d.userId === person.id && allows(person.id, 'push')) deliveries.push(row('push', d.id, { userId: person.id }));
		if (phones.some((p) => p.userId === person.id) && allows(person.id, 'sms')) deliveries.push(row('sms', person.id));
	}
	for (const hook of hooks) deliveries.push(row('webhook', hook.id));
	return enqueue(tx, deliveries, now, notBefore ?? now);
}
