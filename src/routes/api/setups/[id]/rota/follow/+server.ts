// A setup following another setup's rota and escalation policy, as the on-call page's "Follow" and
// "Stop following" do: operators set or clear it; the answer is the follower's rota as GET …/rota gives it.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { pagingNow } from '$lib/server/oncall/clock';
import { rotaView } from '$lib/server/oncall/rota-service';
import { followRota, RotaShareError, stopFollowing } from '$lib/server/oncall/rota-sharing';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

const followSchema = z.object({ rotaSetupId: z.string().min(1, 'choose the setup whose rota to follow') });

export const PUT: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { rotaSetupId } = await readJson(event.request, followSchema);
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	try {
		await followRota(db, event.params.id, rotaSetupId, user.id);
	} catch (err) {
		if (err instanceof RotaShareError) error(400, err.message);
		throw err;
	}
	return json(await rotaView(db, event.params.id, pagingNow()));
};

export const DELETE: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	if (!(await stopFollowing(db, event.params.id))) error(404, 'this setup follows no other rota');
	return json(await rotaView(db, event.params.id, pagingNow()));
};
