// Silences over JSON: everyone signed in reads them; operators and admins create them.
import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { silenceSchema } from '$lib/alerting/silence-form';
import { json, parseQuery, readJson, requireRole } from '$lib/server/http/guard';
import { createSilence, listSilences, SilenceError } from '$lib/server/alerting/silences';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const querySchema = z.object({
	setup: z.string().min(1).optional(),
	run: z.string().min(1).optional(),
	active: z.enum(['1', 'true', '0', 'false'], { message: 'active is 1 or 0' }).optional()
});

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const q = parseQuery(event.url, querySchema);
	const { db } = await getRuntime();
	return json({
		silences: await listSilences(db, { setupId: q.setup, runId: q.run, activeOnly: q.active === '1' || q.active === 'true' })
	});
};

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const input = await readJson(event.request, silenceSchema);
	const { db } = await getRuntime();
	try {
		return json({ silence: await createSilence(db, input, user.id) }, { status: 201 });
	} catch (err) {
		if (err instanceof SilenceError) error(err.status, err.message);
		throw err;
	}
};
