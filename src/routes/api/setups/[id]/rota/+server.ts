// A setup's on-call rota and escalation policy: everyone signed in reads, operators replace.
import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { pagingNow } from '$lib/server/oncall/clock';
import { RotaError, rotaSchema, rotaView, saveRota } from '$lib/server/oncall/rota-service';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	return json(await rotaView(db, event.params.id, pagingNow()));
};

export const PUT: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, rotaSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	try {
		await saveRota(db, event.params.id, input, user.id);
	} catch (err) {
		if (err instanceof RotaError) error(400, err.message);
		throw err;
	}
	return json(await rotaView(db, event.params.id, pagingNow()));
};
