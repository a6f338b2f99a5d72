// Setting a new password from an e-mailed link. better-auth spends the token and, as configured in
// auth/options.ts, revokes every session of the person in the same transaction.
import { redirect } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { resetPasswordSchema } from '$lib/people/forms';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ form: await superValidate(zod4(resetPasswordSchema)) });

export const actions: Actions = {
	reset: async ({ request, params }) => {
		const form = await superValidate(request, zod4(resetPasswordSchema));
		if (!form.valid) return fail(400, { form });
		const { auth } = await getRuntime();
		try {
			await auth.api.resetPassword({ body: { token: params.token, newPassword: form.data.password }, headers: request.headers });
		} catch (err) {
			if (err instanceof APIError && err.status === 'BAD_REQUEST' && /token/i.test(err.message)) {
				return message(form, 'This link has expired or was already used. Ask for a new one.', { status: 410 });
			}
			if (err instanceof APIError) return message(form, `Could not set the password: ${err.message}`, { status: 400 });
			throw err;
		}
		redirect(303, '/signin?reset=1');
	}
};
