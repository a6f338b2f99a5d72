import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { createSetup, listSetupsWithStatus, newSetupSchema, setupNameTaken } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	return json({ setups: await listSetupsWithStatus(db) });
};

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, newSetupSchema);
	const { db } = await getRuntime();
	if (await setupNameTaken(db, input.name)) error(409, `name: a setup called "${input.name}" exists already`);
	return json({ setup: await createSetup(db, input, user.id) }, { status: 201 });
};
