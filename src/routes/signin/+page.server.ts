// Sign-in: the form goes through superforms with the schema the page checks with; the brake and the
// account check answer as the form's message.
import { redirect } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/people/forms';
import { requestAddress, signInLimiter } from '$lib/server/http/signin-guard';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths, so the sign-in page cannot be used to bounce people elsewhere. */
function safeNext(next: string | null) {
	return next && next.startsWith('/') && !next.startsWith('//') ? next : '/';
}

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return { form: await superValidate(zod4(signInSchema)) };
};

export const actions: Actions = {
	signIn: async (event) => {
		const { request, url } = event;
		const form = await superValidate(request, zod4(signInSchema));
		const credentials = { ...form.data };
		// The password never travels back to the page.
		form.data.password = '';
		if (!form.valid) return fail(400, { form });
		// The same brake as better-auth's JSON route (src/lib/server/http/signin-guard.ts), keyed alike.
		const limiter = signInLimiter();
		const address = await requestAddress(event);
		const refusal = await limiter.check(credentials.email, address);
		if (refusal) {
			event.setHeaders({ 'retry-after': String(refusal.retryAfter_s) });
			return message(form, refusal.message, { status: 429 });
		}
		const { auth } = await getRuntime();
		try {
			await auth.api.signInEmail({ body: credentials, headers: request.headers });
		} catch (err) {
			if (err instanceof APIError) {
				if (err.statusCode === 401) await limiter.failed(credentials.email, address);
				return message(form, 'that e-mail and password do not match an account', { status: 400 });
			}
			throw err;
		}
		await limiter.succeeded(credentials.email);
		redirect(303, safeNext(url.searchParams.get('next')));
	}
};
