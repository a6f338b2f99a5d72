// GET /api/runs/:id/iq?from_ms=&to_ms= — the run's summed IQ histogram over a span (default: its
// last hour) with the phase-state lobes found in it.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { runIq } from '$lib/server/runs/iq';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const ms = z.coerce.number().int('must be whole milliseconds').min(0, 'must not be negative');
const query = z
	.object({ from_ms: ms.optional(), to_ms: ms.optional() })
	.refine((q) => q.from_ms === undefined || q.to_ms === undefined || q.from_ms <= q.to_ms, {
		message: 'from_ms must not be after to_ms',
		path: ['from_ms']
	});

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, query);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return json(await runIq(db, run, q));
};
