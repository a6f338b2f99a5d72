// The settings page's API-token part (load and actions), kept out of +page.server.ts so other
// sections of the page add theirs beside it.
import { error, fail as kitFail, type RequestEvent } from '@sveltejs/kit';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { newApiTokenSchema } from '$lib/people/forms';
import { requireRole } from '$lib/server/http/guard';
import { createApiToken, listApiTokens, revokeApiToken } from '$lib/server/people/api-tokens';
import { getRuntime } from '$lib/server/runtime';

export async function loadApiTokens(event: Pick<RequestEvent, 'locals'>) {
	const me = requireRole(event, 'observer');
	const { db } = await getRuntime();
	return { tokens: await listApiTokens(db, me.id), form: await superValidate(zod4(newApiTokenSchema), { id: 'api-token' }) };
}

export const apiTokenActions = {
	createApiToken: async (event: RequestEvent) => {
		const me = requireRole(event, 'observer');
		const form = await superValidate(event.request, zod4(newApiTokenSchema), { id: 'api-token' });
		if (!form.valid) return fail(400, { form });
		const { db } = await getRuntime();
		const { token, secret } = await createApiToken(db, me.id, form.data.label);
		// The secret travels once, in this answer; only its hash is stored.
		form.data.label = '';
		return message(form, { label: token.label, secret });
	},
	revokeApiToken: async (event: RequestEvent) => {
		const me = requireRole(event, 'observer');
		const id = (await event.request.formData()).get('id');
		if (typeof id !== 'string' || !id) return kitFail(400, { revokeError: 'the form did not say which token' });
		const { db } = await getRuntime();
		if (!(await revokeApiToken(db, me.id, id))) error(404, 'you have no active API token with this id');
		return { revoked: id };
	}
};
