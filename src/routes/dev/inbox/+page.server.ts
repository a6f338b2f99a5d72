// The local catchers' inbox (PHASEWARDEN_CATCHER=1): the caught e-mails, pushes and texts as their
// recipients would see them, for someone running the demo without a JSON viewer.
import { error } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { apiGetOptional } from '$lib/ui/api';
import type { PageServerLoad } from './$types';

type Mail = { id: number; to: string[]; subject: string; text?: string; receivedAt: string };
type Push = { id: number; endpoint: string; receivedAt: string; payload: { title?: string; body?: string; url?: string; actions?: { title: string; url: string }[] } };
type Text = { id: number; to: string; body: string; receivedAt: string };

export const load: PageServerLoad = async ({ fetch, locals }) => {
	if (!hasRole(locals.user?.role, 'operator')) error(403, 'The catchers’ inbox needs the operator role.');
	const [mail, push, sms] = await Promise.all([
		apiGetOptional<{ messages: Mail[] }>(fetch, '/api/dev/mail'),
		apiGetOptional<{ messages: Push[] }>(fetch, '/api/dev/push'),
		apiGetOptional<{ messages: Text[] }>(fetch, '/api/dev/sms')
	]);
	if (!mail && !push && !sms) error(404, 'The local catchers are not running (start the server with PHASEWARDEN_CATCHER=1).');
	const newest = <T extends { id: number }>(list: T[] | undefined) => [...(list ?? [])].sort((a, b) => b.id - a.id).slice(0, 50);
	return { mail: newest(mail?.messages), push: newest(push?.messages), sms: newest(sms?.messages) };
};
