// One incident: details, evidence and history; acknowledge, resolve and notes for operators.
import { fail } from '@sveltejs/kit';
import { apiGet, apiSend, field } from '$lib/ui/api';
import type { Incident, IncidentEvent } from '$lib/ui/types';
import { incidentActions } from '../incident-actions.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, params, depends }) => {
	depends('pw:incident');
	return apiGet<{ incident: Incident; events: IncidentEvent[] }>(fetch, `/api/incidents/${encodeURIComponent(params.id)}`);
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
