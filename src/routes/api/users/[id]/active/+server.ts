import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { ActivationError, setActive } from '$lib/server/people/activation';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ active: z.boolean({ message: 'active must be true or false' }) });

/** Deactivates (no sign-in, sessions ended, API tokens refused) or reactivates a person. */
export const PUT: RequestHandler = async (event) => {
	requireRole(event, 'admin');
	const { active } = await readJson(event.request, body);
	const { db } = await getRuntime();
	try {
		const user = await setActive(db, event.params.id, active);
		if (!user) error(404, 'no person with this id');
		return json({ user: { id: user.id, email: user.email, name: user.name, role: user.role, active: !user.banned } });
	} catch (err) {
		if (err instanceof ActivationError) error(409, err.message);
		throw err;
	}
};
