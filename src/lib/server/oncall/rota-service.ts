// Reading and editing a setup's rota, its overrides and its escalation policy; who is on call now.
// A setup that follows another's rota (rota-sharing.ts) is covered by that setup's rota, overrides
// and policy; it is edited there, on the rota's own setup.
import { randomUUID } from 'node:crypto';
import { and, asc, eq, gt, inArray } from 'drizzle-orm';
import { z } from 'zod';
import { DEFAULT_ESCALATION_POLICY, type EscalationPolicy } from '../../oncall/escalation';
import { onCallAt, onCallSpans, type RotaOverride, type WeeklyRota } from '../../oncall/rota';
import type { Db, Tx } from '../db';
import { escalationPolicies, rotaOverrides, rotaShares, rotas, setups, user } from '../db/schema';
import { labTimeZone } from '../reports/time-zone';
import { listMembers } from '../setups/service';
import { followableRotas, followersOf, notOnCallable, rotaOwnerOf } from './rota-sharing';

export { rotaSchema, type RotaInput } from '../../oncall/forms';
import type { RotaInput } from '../../oncall/forms';

export const overrideSchema = z
	.object({
		userId: z.string().min(1, 'userId names the person who covers'),
		from: z.coerce.date({ message: 'from must be a date and time' }),
		until: z.coerce.date({ message: 'until must be a date and time' }),
		note: z.string().trim().max(500, 'note is at most 500 characters').default('')
	})
	.refine((o) => o.until.getTime() > o.from.getTime(), { message: 'until must be after from', path: ['until'] });
export type OverrideInput = z.infer<typeof overrideSchema>;

export class RotaError extends Error {}

export async function getRota(db: Tx | Db, setupId: string): Promise<WeeklyRota | null> {
	const [row] = await db.select().from(rotas).where(eq(rotas.setupId, setupId));
	return row
		? { members: row.members, handoverWeekday: row.handoverWeekday, handoverTime: row.handoverTime, startsOn: row.startsOn }
		: null;
}

/** The escalation policy that covers `setupId` (its rota owner's, when it follows another setup's rota). */
export async function getPolicy(db: Tx | Db, setupId: string): Promise<EscalationPolicy> {
	const owner = await rotaOwnerOf(db, setupId);
	const [row] = await db.select().from(escalationPolicies).where(eq(escalationPolicies.setupId, owner));
	if (!row) return DEFAULT_ESCALATION_POLICY;
	return {
		...DEFAULT_ESCALATION_POLICY,
		critical: { ...DEFAULT_ESCALATION_POLICY.critical, ackWithin_min: row.criticalAckMin },
		warning: { ...DEFAULT_ESCALATION_POLICY.warning, ackWithin_min: row.warningAckMin, lastStep: row.warningLastStep }
	};
}

/** Replaces the rota and policy; every person in it must be an operator or admin member of the setup. */
export async function saveRota(db: Db, setupId: string, input: RotaInput, actorId: string) {
	await refuseIfFollowing(db, setupId);
	const members = await listMembers(db, setupId);
	input = { ...input, members: input.members.filter((id) => id !== '') };
	if (new Set(input.members).size !== input.members.length) throw new RotaError('a person appears twice in the rota');
	for (const id of input.members) {
		const m = members.find((x) => x.id === id);
		if (!m) throw new RotaError(`${id} is not a member of this setup`);
		if (m.role !== 'operator' && m.role !== 'admin') throw new RotaError(`${m.name} is an observer and cannot be on call`);
	}
	// The setups that share this rota must be able to page everyone on it too.
	for (const follower of await followersOf(db, setupId)) {
		const missing = await notOnCallable(db, follower.id, input.members);
		if (missing.length)
			throw new RotaError(
				`${missing.join(', ')} cannot be on call for ${follower.name}, which shares this rota (not an operator or admin member there)`
			);
	}
	const rota = {
		members: input.members,
		handoverWeekday: input.handoverWeekday,
		handoverTime: input.handoverTime,
		startsOn: input.startsOn
	};
	await db.transaction(async (tx) => {
		await tx
			.insert(rotas)
			.values({ setupId, ...rota, updatedBy: actorId, updatedAt: new Date() })
			.onConflictDoUpdate({ target: rotas.setupId, set: { ...rota, updatedBy: actorId, updatedAt: new Date() } });
		const policy = { criticalAckMin: input.criticalAckMin, warningAckMin: input.warningAckMin };
		await tx
			.insert(escalationPolicies)
			.values({ setupId, ...policy })
			.onConflictDoUpdate({ target: escalationPolicies.setupId, set: policy });
	});
	return rota;
}

export async function listOverrides(db: Tx | Db, setupId: string, after: Date) {
	return db
		.select({
			id: rotaOverrides.id,
			userId: rotaOverrides.userId,
			name: user.name,
			from: rotaOverrides.fromAt,
			until: rotaOverrides.untilAt,
			note: rotaOverrides.note
		})
		.from(rotaOverrides)
		.innerJoin(user, eq(user.id, rotaOverrides.userId))
		.where(and(eq(rotaOverrides.setupId, setupId), gt(rotaOverrides.untilAt, after)))
		.orderBy(asc(rotaOverrides.fromAt));
}

export async function addOverride(db: Db, setupId: string, input: OverrideInput, actorId: string) {
	await refuseIfFollowing(db, setupId);
	const members = await listMembers(db, setupId);
	const m = members.find((x) => x.id === input.userId);
	if (!m || (m.role !== 'operator' && m.role !== 'admin'))
		throw new RotaError('the person who covers must be an operator or admin member of this setup');
	for (const follower of await followersOf(db, setupId)) {
		if ((await notOnCallable(db, follower.id, [input.userId])).length)
			throw new RotaError(`${m.name} cannot cover ${follower.name}, which shares this rota (not an operator or admin member there)`);
	}
	const [row] = await db
		.insert(rotaOverrides)
		.values({
			id: randomUUID(),
			setupId,
			userId: input.userId,
			fromAt: input.from,
			untilAt: input.until,
			note: input.note,
			createdBy: actorId
		})
		.returning();
	return row;
}

export async function deleteOverride(db: Db, setupId: string, id: string): Promise<boolean> {
	const gone = await db
		.delete(rotaOverrides)
		.where(and(eq(rotaOverrides.setupId, setupId), eq(rotaOverrides.id, id)))
		.returning({ id: rotaOverrides.id });
	return gone.length > 0;
}

/** A setup that follows another's rota is edited on that setup's page. */
async function refuseIfFollowing(db: Tx | Db, setupId: string) {
	const owner = await rotaOwnerOf(db, setupId);
	if (owner === setupId) return;
	const [o] = await db.select({ name: setups.name }).from(setups).where(eq(setups.id, owner));
	throw new RotaError(`this setup follows the rota of ${o?.name ?? owner}; change it there, or stop following it first`);
}

const asOverrides = (rows: { userId: string; from: Date; until: Date }[]): RotaOverride[] =>
	rows.map((o) => ({ userId: o.userId, from: o.from, until: o.until }));

/** Primary and secondary on call at `at` (user ids), or nulls when the setup has no rota. */
export async function onCallIds(db: Tx | Db, setupId: string, at: Date) {
	const owner = await rotaOwnerOf(db, setupId);
	const [rota, overrides] = await Promise.all([getRota(db, owner), listOverrides(db, owner, at)]);
	return onCallAt(rota, asOverrides(overrides), at, labTimeZone());
}

/** The rota page's data: rota, policy, overrides, names, and who is on call over the next `days`. */
export async function rotaView(db: Db, setupId: string, now: Date, days = 14) {
	const owner = await rotaOwnerOf(db, setupId);
	const [rota, policy, overrides, members, followers, followable] = await Promise.all([
		getRota(db, owner),
		getPolicy(db, setupId),
		listOverrides(db, owner, now),
		listMembers(db, setupId),
		followersOf(db, setupId),
		followableRotas(db, setupId)
	]);
	const [sharedFrom] =
		owner === setupId ? [] : await db.select({ id: setups.id, name: setups.name }).from(setups).where(eq(setups.id, owner));
	if (owner !== setupId) for (const m of await listMembers(db, owner)) if (!members.some((x) => x.id === m.id)) members.push(m);
	const timeZone = labTimeZone();
	const until = new Date(now.getTime() + days * 86_400_000);
	const spans = onCallSpans(rota, asOverrides(overrides), now, until, timeZone);
	const names = new Map(members.map((m) => [m.id, m.name]));
	for (const o of overrides) names.set(o.userId, o.name);
	const nameOf = (id: string | null) => (id ? (names.get(id) ?? id) : null);
	return {
		timeZone,
		/** The setup whose rota covers this one, when it is not its own. */
		sharedFrom: sharedFrom ?? null,
		/** The setups that follow this setup's rota. */
		followers,
		/** Rotas this setup could follow instead of its own. */
		followable: followers.length ? [] : followable,
		rota,
		policy: { criticalAckMin: policy.critical.ackWithin_min, warningAckMin: policy.warning.ackWithin_min },
		overrides,
		members: members.filter((m) => m.role === 'operator' || m.role === 'admin'),
		now: onCallAt(rota, asOverrides(overrides), now, timeZone),
		spans: spans.map((s) => ({ from: s.from, until: s.until, primary: nameOf(s.primary), secondary: nameOf(s.secondary) }))
	};
}

/** "On call now" for several setups at once (the overview): setup id → primary's name. */
export async function onCallNowNames(db: Db, setupIds: string[], now: Date): Promise<Record<string, string>> {
	const out: Record<string, string> = {};
	if (setupIds.length === 0) return out;
	const withRota = await db.select({ setupId: rotas.setupId }).from(rotas).where(inArray(rotas.setupId, setupIds));
	const sharing = await db.select({ setupId: rotaShares.setupId }).from(rotaShares).where(inArray(rotaShares.setupId, setupIds));
	const ids: Record<string, string> = {};
	for (const id of new Set([...withRota.map((r) => r.setupId), ...sharing.map((r) => r.setupId)])) {
		const who = await onCallIds(db, id, now);
		if (who.primary) ids[id] = who.primary;
	}
	const people = Object.values(ids).length
		? await db
				.select({ id: user.id, name: user.name })
				.from(user)
				.where(inArray(user.id, Object.values(ids)))
		: [];
	for (const [setupId, userId] of Object.entries(ids)) out[setupId] = people.find((p) => p.id === userId)?.name ?? userId;
	return out;
}
