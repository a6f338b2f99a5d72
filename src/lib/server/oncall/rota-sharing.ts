// A group of setups on one rota: a setup may follow another setup's rota (and escalation policy),
// so the people who look after several fridges keep one rotation and one set of overrides. One
// level only, which keeps "whose rota is this" a single lookup and rules out cycles. Everyone on
// the shared rota must be allowed to be on call for every setup of the group (operator or admin
// member), checked when a setup joins and whenever the shared rota changes (rota-service.ts).
import { eq, inArray } from 'drizzle-orm';
import type { Db, Tx } from '../db';
import { rotaShares, rotas, setups, user } from '../db/schema';
import { listMembers } from '../setups/service';

export class RotaShareError extends Error {}

/** The setup whose rota covers `setupId`: the one it follows, else itself. */
export async function rotaOwnerOf(db: Tx | Db, setupId: string): Promise<string> {
	const [share] = await db.select({ rotaSetupId: rotaShares.rotaSetupId }).from(rotaShares).where(eq(rotaShares.setupId, setupId));
	return share?.rotaSetupId ?? setupId;
}

/** The setups that follow `ownerId`'s rota, by name. */
export async function followersOf(db: Tx | Db, ownerId: string) {
	return db
		.select({ id: setups.id, name: setups.name })
		.from(rotaShares)
		.innerJoin(setups, eq(setups.id, rotaShares.setupId))
		.where(eq(rotaShares.rotaSetupId, ownerId))
		.orderBy(setups.name);
}

/** The rota's people who may not be on call for `setupId` (not an operator or admin member), by name. */
export async function notOnCallable(db: Tx | Db, setupId: string, people: string[]): Promise<string[]> {
	if (people.length === 0) return [];
	const members = await listMembers(db, setupId);
	const missing = people.filter((id) => !members.some((m) => m.id === id && (m.role === 'operator' || m.role === 'admin')));
	if (missing.length === 0) return [];
	const names = await db.select({ id: user.id, name: user.name }).from(user).where(inArray(user.id, missing));
	return missing.map((id) => names.find((n) => n.id === id)?.name ?? id);
}

/** `setupId` follows `ownerId`'s rota from now on. */
export async function followRota(db: Db, setupId: string, ownerId: string, actorId: string) {
	if (ownerId === setupId) throw new RotaShareError('a setup cannot follow its own rota');
	const [owner] = await db.select({ id: setups.id, name: setups.name }).from(setups).where(eq(setups.id, ownerId));
	if (!owner) throw new RotaShareError('rotaSetupId names no setup');
	if ((await rotaOwnerOf(db, ownerId)) !== ownerId)
		throw new RotaShareError(`${owner.name} follows another setup's rota itself; follow that one`);
	if ((await followersOf(db, setupId)).length)
		throw new RotaShareError('other setups follow this setup’s rota; they would be left without one');
	const [rota] = await db.select({ members: rotas.members }).from(rotas).where(eq(rotas.setupId, ownerId));
	if (!rota) throw new RotaShareError(`${owner.name} has no rota to follow`);
	const missing = await notOnCallable(db, setupId, rota.members);
	if (missing.length)
		throw new RotaShareError(
			`${missing.join(', ')} on ${owner.name}'s rota cannot be on call here (not an operator or admin member of this setup)`
		);
	const values = { rotaSetupId: ownerId, createdBy: actorId, createdAt: new Date() };
	await db
		.insert(rotaShares)
		.values({ setupId, ...values })
		.onConflictDoUpdate({ target: rotaShares.setupId, set: values });
	return owner;
}

/** Back to the setup's own rota (or none, when it never had one: every operator is paged). */
export async function stopFollowing(db: Db, setupId: string): Promise<boolean> {
	const gone = await db.delete(rotaShares).where(eq(rotaShares.setupId, setupId)).returning({ setupId: rotaShares.setupId });
	return gone.length > 0;
}

/** Setups whose rota another setup may follow: they have a rota and follow nobody. */
export async function followableRotas(db: Db, setupId: string) {
	const owners = await db
		.select({ id: setups.id, name: setups.name })
		.from(rotas)
		.innerJoin(setups, eq(setups.id, rotas.setupId))
		.orderBy(setups.name);
	const following = new Set((await db.select({ id: rotaShares.setupId }).from(rotaShares)).map((r) => r.id));
	return owners.filter((o) => o.id !== setupId && !following.has(o.id));
}
