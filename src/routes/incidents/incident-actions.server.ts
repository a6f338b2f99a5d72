// Acknowledge and resolve as form actions, shared by the run page and the incident pages.
import { fail, type RequestEvent } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { changeIncidentState, type IncidentVerb } from '$lib/server/incidents/act';
import { IncidentActionError, noteSchema } from '$lib/server/incidents/service';

async function act({ request, locals }: RequestEvent, verb: IncidentVerb) {
	const form = await request.formData();
	const rawId = form.get('id');
	const id = typeof rawId === 'string' && rawId.trim() ? rawId.trim() : null;
	if (!id) return fail(400, { message: 'The form did not say which incident (field "id" is missing).', incidentId: null });
	const rawNote = form.get('note');
	const parsed = noteSchema.safeParse({ note: typeof rawNote === 'string' && rawNote.trim() ? rawNote : undefined });
	if (!parsed.success) return fail(400, { message: parsed.error.issues[0].message, incidentId: id });
	const user = locals.user;
	if (!user || !hasRole(user.role, 'operator'))
		return fail(403, { message: 'Your role may not change incidents; an operator can.', incidentId: id });
	try {
		await changeIncidentState(verb, id, user.id, parsed.data.note);
	} catch (err) {
		if (!(err instanceof IncidentActionError)) throw err;
		const why =
			err.status === 409 ? `${err.message} (someone may have done it already; the page now shows the current state).` : err.message;
		return fail(err.status, { message: why, incidentId: id });
	}
	return { done: verb, incidentId: id, message: null as string | null };
}

export const incidentActions = {
	acknowledge: (event: RequestEvent) => act(event, 'ack'),
	resolve: (event: RequestEvent) => act(event, 'resolve')
};
