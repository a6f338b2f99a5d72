// A run's notes: anyone signed in reads them; operators and admins add them.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { annotationInputSchema } from '$lib/annotations/schema';
import { addAnnotation, listAnnotations } from '$lib/server/annotations/service';
import { json, parseQuery, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import type { RequestHandler } from './$types';

const spanQuery = z.object({
	from_ms: z.coerce.number({ error: 'must be a time in ms' }).int('must be a whole number of ms').optional(),
	to_ms: z.coerce.number({ error: 'must be a time in ms' }).int('must be a whole number of ms').optional()
});

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, spanQuery);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return json({ annotations: await listAnnotations(db, run.id, q.from_ms, q.to_ms) });
};

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, annotationInputSchema);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	return json(await addAnnotation(db, run.id, user, input), { status: 201 });
};
