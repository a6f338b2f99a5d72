// Acknowledge and resolve as form actions, shared by the run page and the incident pages.
import { fail, type RequestEvent } from '@sveltejs/kit';
import { apiSend, field } from '$lib/ui/api';

type Verb = 'ack' | 'resolve';

async function act({ request, fetch }: RequestEvent, verb: Verb) {
	const form = await request.formData();
	const id = field(form, 'id');
	if (!id) return fail(400, { message: 'The form did not say which incident (field "id" is missing).', incidentId: null });
	const note = field(form, 'note');
	if (note && note.length > 2000) return fail(400, { message: 'The note is at most 2000 characters.', incidentId: id });
	const res = await apiSend<{ incident: unknown }>(fetch, `/api/incidents/${encodeURIComponent(id)}/${verb}`, 'POST', note ? { note } : {});
	if (!res.ok) {
		const why =
			res.status === 403
				? 'Your role may not change incidents; an operator can.'
				: res.status === 409
					? `${res.message} (someone may have done it already; the page now shows the current state).`
					: res.message;
		return fail(res.status, { message: why, incidentId: id });
	}
	return { done: verb, incidentId: id, message: null as string | null };
}

export const incidentActions = {
	acknowledge: (event: RequestEvent) => act(event, 'ack'),
	resolve: (event: RequestEvent) => act(event, 'resolve')
};
