import { error } from '@sveltejs/kit';
import { incidentNoteSchema } from '$lib/incidents/note-form';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { addIncidentNote, IncidentActionError } from '$lib/server/incidents/service';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { note } = await readJson(event.request, incidentNoteSchema);
	const { db } = await getRuntime();
	try {
		await addIncidentNote(db, event.params.id, user.id, note);
	} catch (err) {
		if (err instanceof IncidentActionError) error(err.status, err.message);
		throw err;
	}
	return json({ ok: true });
};
