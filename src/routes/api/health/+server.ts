import { json } from '@sveltejs/kit';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/**
 * Liveness for scripts and process supervisors: answers once the database is open. `leader` says
 * whether background work (escalation, reports, retention) runs in this instance — with several
 * instances on one PostgreSQL server, exactly one should say so.
 */
export const GET: RequestHandler = async () => {
	const { cluster } = await getRuntime();
	return json({ ok: true, leader: cluster.isLeader() });
};
