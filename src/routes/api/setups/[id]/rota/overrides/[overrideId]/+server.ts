import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { deleteOverride } from '$lib/server/oncall/rota-service';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	if (!(await deleteOverride(db, event.params.id, event.params.overrideId))) error(404, 'no override with this id on this setup');
	return new Response(null, { status: 204 });
};
