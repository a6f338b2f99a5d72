// "I cover Tuesday night": operators add an override to a setup's rota.
import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { addOverride, overrideSchema, RotaError } from '$lib/server/oncall/rota-service';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, overrideSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	try {
		return json({ override: await addOverride(db, event.params.id, input, user.id) }, { status: 201 });
	} catch (err) {
		if (err instanceof RotaError) error(400, err.message);
		throw err;
	}
};
