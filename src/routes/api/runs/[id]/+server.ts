import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { runDetail } from '$lib/server/runs/detail';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db, ingest } = await getRuntime();
	const detail = await runDetail(db, ingest, event.params.id);
	if (!detail) error(404, 'no run with this id');
	return json(detail);
};
