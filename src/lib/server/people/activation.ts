// Deactivating a person: better-auth's admin plugin already refuses new sessions for a banned user,
// so deactivation is its ban flag, plus revoking their sessions here (API tokens check the flag).
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { FieldProblem } from '../http/field-problem';
import { session, user } from '../db/schema';

export class ActivationError extends FieldProblem {}

export async function setActive(db: Db, userId: string, active: boolean) {
	return db.transaction(async (tx) => {
		const [target] = await tx.select().from(user).where(eq(user.id, userId)).for('update');
		if (!target) return null;
		if (!active && target.role === 'admin') {
			// Lock every admin row so two admins deactivating each other at once cannot both succeed.
			const admins = await tx.select({ id: user.id, banned: user.banned }).from(user).where(eq(user.role, 'admin')).for('update');
			if (!admins.some((a) => a.id !== userId && !a.banned))
				throw new ActivationError('active', 'the last active admin cannot be deactivated');
		}
		const [row] = await tx
			.update(user)
			.set({ banned: !active, banReason: active ? null : 'deactivated by an admin', banExpires: null, updatedAt: new Date() })
			.where(eq(user.id, userId))
			.returning();
		if (!active) await tx.delete(session).where(eq(session.userId, userId));
		return row;
	});
}
