import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { safeText } from '$lib/protocol/safe-text';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { addIncidentNote, IncidentActionError } from '$lib/server/incidents/service';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

const body = z.object({ note: safeText(z.string().trim().min(1, 'note is required').max(2000, 'note is at most 2000 characters')) });

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { note } = await readJson(event.request, body);
	const { db } = await getRuntime();
	try {
		await addIncidentNote(db, event.params.id, user.id, note);
	} catch (err) {
		if (err instanceof IncidentActionError) error(err.status, err.message);
		throw err;
	}
	return json({ ok: true });
};
