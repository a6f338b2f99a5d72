import { json } from '@sveltejs/kit';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Liveness for scripts and process supervisors: answers once the database is open. */
export const GET: RequestHandler = async () => {
	await getRuntime();
	return json({ ok: true });
};
