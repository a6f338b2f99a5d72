// One incident: details, evidence drawn from its stored windows, and history; acknowledge, resolve
// and notes for operators. The loader reads through the server's services, not the JSON API.
import { error } from '@sveltejs/kit';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { hasRole } from '$lib/roles';
import { incidentNoteSchema } from '$lib/incidents/note-form';
import { requireRole } from '$lib/server/http/guard';
import { incidentEvidenceView } from '$lib/server/incidents/evidence-view';
import { addIncidentNote, getIncident, IncidentActionError } from '$lib/server/incidents/service';
import { incidentGroup } from '$lib/server/oncall/paging';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
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
	const group = JSON.parse(JSON.stringify(await incidentGroup(db, event.params.id))) as {
		id: string;
		kind: string;
		severity: string;
		state: string;
		summary: string;
		openedAt: string;
		head: boolean;
	}[];
	return { ...wire, evidence, states: run?.states ?? null, group, noteForm: await superValidate(zod4(incidentNoteSchema)) };
};

export const actions: Actions = {
	...incidentActions,
	addNote: async ({ request, params, locals }) => {
		const form = await superValidate(request, zod4(incidentNoteSchema));
		const user = locals.user;
		if (!user || !hasRole(user.role, 'operator')) return message(form, 'Your role may not add notes; an operator can.', { status: 403 });
		if (!form.valid) return fail(400, { form });
		const { db } = await getRuntime();
		try {
			await addIncidentNote(db, params.id, user.id, form.data.note);
		} catch (err) {
			if (err instanceof IncidentActionError) return message(form, err.message, { status: err.status });
			throw err;
		}
		return { form, done: 'note', incidentId: params.id };
	}
};
