import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { retentionSchema, setRawRetention } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

/** How long raw frames are kept: `{ "rawRetentionDays": 30 }`, or null for good. Rollups stay regardless. */
export const PUT: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { rawRetentionDays } = await readJson(event.request, retentionSchema);
	const { db } = await getRuntime();
	const setup = await setRawRetention(db, event.params.id, rawRetentionDays);
	if (!setup) error(404, 'no setup with this id');
	return json({ rawRetentionDays: setup.rawRetentionDays });
};
