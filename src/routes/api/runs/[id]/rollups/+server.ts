// A run's frame rollups at one resolution, for the timeline: ascending by bucket start from
// `from`, at most ROLLUP_PAGE_MAX rows; `truncated` tells the caller to ask again from the next bucket.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { ROLLUP_RESOLUTIONS_S } from '$lib/rollup/rollup';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { readRollups } from '$lib/server/rollups/store';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const ROLLUP_PAGE_MAX = 5000;

const resolutionList = ROLLUP_RESOLUTIONS_S.join(', ');
const agentMs = z.coerce.number().int('must be a whole number of ms (agent clock)').min(0, 'must not be negative');
const query = z
	.object({
		resolution: z.coerce
			.number({ error: `must be one of ${resolutionList} (seconds)` })
			.refine((r) => (ROLLUP_RESOLUTIONS_S as readonly number[]).includes(r), { message: `must be one of ${resolutionList} (seconds)` }),
		from: agentMs.optional(),
		to: agentMs.optional()
	})
	.refine((q) => q.from === undefined || q.to === undefined || q.from <= q.to, { message: 'from must not exceed to', path: ['from'] });

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, query);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	// One row more than the page tells whether more exist without a count.
	const rows = await readRollups(db, run.id, q.resolution, q.from, q.to, ROLLUP_PAGE_MAX + 1);
	const truncated = rows.length > ROLLUP_PAGE_MAX;
	return json({ resolution_s: q.resolution, rollups: truncated ? rows.slice(0, ROLLUP_PAGE_MAX) : rows, truncated });
};
