// Acknowledge and resolve: the change, then the live update. Shared by the API routes and the pages'
// form actions, which each check the role and read the note their own way.
import { error, json, type RequestEvent } from '@sveltejs/kit';
import { readJson, requireRole } from '../http/guard';
import { getRuntime } from '../runtime';
import { acknowledgeIncident, getIncident, IncidentActionError, noteSchema, resolveIncident } from './service';

export type IncidentVerb = 'ack' | 'resolve';

/** Changes the incident's state and tells open pages; throws IncidentActionError (404, 409). */
export async function changeIncidentState(action: IncidentVerb, id: string, actorId: string, note: string | undefined) {
	const { db, bus } = await getRuntime();
	const change = action === 'ack' ? acknowledgeIncident : resolveIncident;
	await change(db, id, actorId, note);
	const found = await getIncident(db, id);
	if (found) bus.publish({ type: 'incident', runId: found.incident.runId, setupId: found.incident.setupId, incident: found.incident });
	return found?.incident;
}

export async function actOnIncident(event: RequestEvent<{ id: string }>, action: IncidentVerb) {
	const user = requireRole(event, 'operator');
	const { note } = await readJson(event.request, noteSchema);
	try {
		return json({ incident: await changeIncidentState(action, event.params.id, user.id, note) });
	} catch (err) {
		if (err instanceof IncidentActionError) error(err.status, err.message);
		throw err;
	}
}
