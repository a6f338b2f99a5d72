import { error } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { listRuns } from '$lib/server/runs/service';
import { getSetup, listMembers } from '$lib/server/setups/service';
import { listAgentTokens } from '$lib/server/setups/tokens';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const setup = await getSetup(db, event.params.id);
	if (!setup) error(404, 'no setup with this id');
	const [runs, tokens, members] = await Promise.all([
		listRuns(db, { setup: setup.id }),
		hasRole(user.role, 'operator') ? listAgentTokens(db, setup.id) : Promise.resolve([]),
		listMembers(db, setup.id)
	]);
	return json({ setup, runs: runs.slice(0, 50), tokens, members });
};
