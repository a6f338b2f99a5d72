import { error } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { safeText } from '$lib/protocol/safe-text';
import { user as users } from '$lib/server/db/schema';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { addMember, getSetup, listMembers } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

const body = z.object({ userId: safeText(z.string().min(1, 'userId is required')) });

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { userId } = await readJson(event.request, body);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	const [person] = await db.select({ id: users.id }).from(users).where(eq(users.id, userId));
	if (!person) error(400, 'userId: no such person');
	await addMember(db, event.params.id, userId);
	return json({ members: await listMembers(db, event.params.id) });
};
