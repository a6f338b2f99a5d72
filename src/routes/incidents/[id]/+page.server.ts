// One incident: details, evidence drawn from its stored windows, and history; acknowledge, resolve
// and notes for operators. The loader reads through the server's services, not the JSON API.
import { error, fail } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { incidentEvidenceView } from '$lib/server/incidents/evidence-view';
import { getIncident } from '$lib/server/incidents/service';
import { incidentGroup } from '$lib/server/oncall/paging';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { apiSend, field } from '$lib/ui/api';
import type { Incident, IncidentEvent } from '$lib/ui/types';
import { incidentActions } from '../incident-actions.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	event.depends('pw:incident');
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	const found = await getIncident(db, event.params.id);
	if (!found) error(404, 'no incident with this id');
	const run = await getRun(db, found.incident.runId);
	const evidence = run ? await incidentEvidenceView(db, found.incident, run) : null;
	// Dates as the JSON API gives them, so the page and its components read one shape.
	const wire = JSON.parse(JSON.stringify(found)) as { incident: Incident; events: IncidentEvent[] };
	const group = JSON.parse(JSON.stringify(await incidentGroup(db, event.params.id))) as { id: string; kind: string; severity: string; state: string; summary: string; openedAt: string; head: boolean }[];
	return { ...wire, evidence, states: run?.states ?? null, group };
};

export const actions: Actions = {
	...incidentActions,
	addNote: async ({ request, fetch, params }) => {
		const form = await request.formData();
		const note = field(form, 'note');
		if (!note) return fail(400, { message: 'Write the note first (the field is empty).', incidentId: params.id, noteError: true });
		const res = await apiSend(fetch, `/api/incidents/${encodeURIComponent(params.id)}/notes`, 'POST', { note });
		if (!res.ok) return fail(res.status, { message: res.message, incidentId: params.id, noteError: true });
		return { done: 'note', incidentId: params.id, message: null as string | null };
	}
};
