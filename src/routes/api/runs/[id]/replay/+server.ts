import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { replayStoredRun } from '$lib/server/replay/service';
import { getSetupRules } from '$lib/server/rules/service';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const body = z.object({ rules: z.unknown().optional() });

/** What other rules would have raised on this run's stored frames; never touches real incidents. */
export const POST: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { rules } = await readJson(event.request, body);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	try {
		return json(await replayStoredRun(db, run, rules ?? (await getSetupRules(db, run.setupId))));
	} catch (err) {
		if (err instanceof RangeError) error(400, err.message.replace(/^detector rules: /, 'rules.'));
		throw err;
	}
};
