// Shared body of the acknowledge and resolve routes: role check, note, state change, live update.
import { error, json, type RequestEvent } from '@sveltejs/kit';
import { readJson, requireRole } from '../http/guard';
import { getRuntime } from '../runtime';
import { acknowledgeIncident, getIncident, IncidentActionError, noteSchema, resolveIncident } from './service';

export async function actOnIncident(event: RequestEvent<{ id: string }>, action: 'ack' | 'resolve') {
	const user = requireRole(event, 'operator');
	const { note } = await readJson(event.request, noteSchema);
	const { db, bus } = await getRuntime();
	try {
		const change = action === 'ack' ? acknowledgeIncident : resolveIncident;
		await change(db, event.params.id, user.id, note);
	} catch (err) {
		if (err instanceof IncidentActionError) error(err.status, err.message);
		throw err;
	}
	const found = await getIncident(db, event.params.id);
	if (found) bus.publish({ type: 'incident', runId: found.incident.runId, setupId: found.incident.setupId, incident: found.incident });
	return json({ incident: found?.incident });
}
