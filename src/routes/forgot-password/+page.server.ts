// Asking for a reset link. The answer is the same whether or not the address has an account, so the
// form cannot be used to find out who works here.
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { forgotPasswordSchema } from '$lib/people/forms';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

const SENT = 'If that address has an account here, a link to set a new password is on its way. It works once, for an hour.';

export const load: PageServerLoad = async () => ({ form: await superValidate(zod4(forgotPasswordSchema)) });

export const actions: Actions = {
	request: async ({ request }) => {
		const form = await superValidate(request, zod4(forgotPasswordSchema));
		if (!form.valid) return fail(400, { form });
		const { auth } = await getRuntime();
		try {
			await auth.api.requestPasswordReset({ body: { email: form.data.email }, headers: request.headers });
		} catch (err) {
			// Logged, not shown: a different answer would tell the asker something about the address.
			console.error('password reset request failed', err);
		}
		return message(form, SENT);
	}
};
