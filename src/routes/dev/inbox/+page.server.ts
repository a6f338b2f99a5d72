// The local catchers' inbox (PHASEWARDEN_CATCHER=1): the caught e-mails, pushes and texts as their
// recipients would see them, for someone running the demo without a JSON viewer.
import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { PageServerLoad } from './$types';

/** What the service worker would show: the catcher keeps the decrypted JSON as it came. */
type PushPayload = { title?: string; body?: string; url?: string; actions?: { title: string; url: string }[] };

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'operator');
	const { catcher, delivery } = await getRuntime();
	const mail = catcher?.messages();
	const push = delivery.pushCatcher?.messages().map((m) => ({ ...m, payload: (m.payload ?? {}) as PushPayload }));
	const sms = delivery.smsFake?.messages();
	if (!mail && !push && !sms) error(404, 'The local catchers are not running (start the server with PHASEWARDEN_CATCHER=1).');
	const newest = <T extends { id: number }>(list: T[] | undefined) => [...(list ?? [])].sort((a, b) => b.id - a.id).slice(0, 50);
	return { mail: newest(mail), push: newest(push), sms: newest(sms) };
};
