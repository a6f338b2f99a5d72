import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { FRAME_PAGE_MAX, getRun, listFrames } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const seq = z.coerce.number().int('must be a whole seq number').min(0, 'must not be negative');
const query = z
	.object({
		from: seq.optional(),
		to: seq.optional(),
		limit: z.coerce.number().int().min(1).max(FRAME_PAGE_MAX, `limit is at most ${FRAME_PAGE_MAX}`).optional()
	})
	.refine((q) => q.from === undefined || q.to === undefined || q.from <= q.to, { message: 'from must not exceed to', path: ['from'] });

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, query);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return json({ frames: await listFrames(db, run.id, q), lastSeq: run.lastSeq });
};
