// The rota's answer to "who is told at this step": the primary at step 0, the secondary at step 1.
// Null means the rota has no say (no rota, nobody at that level, or step 2+ which reaches every
// operator) and the caller falls back to the setup's operators.
import { inArray } from 'drizzle-orm';
import { stepLevel } from '../../oncall/escalation';
import type { Db, Tx } from '../db';
import { user } from '../db/schema';
import { pagingNow } from './clock';
import { onCallIds } from './rota-service';

export async function onCallRecipients(tx: Tx | Db, setupId: string, step: number, at: Date = pagingNow()) {
	const level = stepLevel(step);
	if (level === 'operators') return null;
	const who = await onCallIds(tx, setupId, at);
	const id = level === 'primary' ? who.primary : who.secondary;
	if (!id) return null;
	const rows = await tx
		.select({ id: user.id, name: user.name, email: user.email })
		.from(user)
		.where(inArray(user.id, [id]));
	return rows.length ? rows : null;
}
