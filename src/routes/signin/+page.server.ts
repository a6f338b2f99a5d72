import { fail, redirect } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { z } from 'zod';
import { requestAddress, signInLimiter } from '$lib/server/http/signin-guard';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

const credentials = z.object({
	email: z.email('enter your e-mail address'),
	password: z.string().min(1, 'enter your password')
});

/** Only same-site paths, so the sign-in page cannot be used to bounce people elsewhere. */
function safeNext(next: string | null) {
	return next && next.startsWith('/') && !next.startsWith('//') ? next : '/';
}

export const load: PageServerLoad = ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return {};
};

export const actions: Actions = {
	signIn: async (event) => {
		const { request, url } = event;
		const form = Object.fromEntries(await request.formData());
		const parsed = credentials.safeParse(form);
		const email = typeof form.email === 'string' ? form.email : '';
		if (!parsed.success) return fail(400, { email, message: parsed.error.issues[0].message });
		// The same brake as better-auth's JSON route (src/lib/server/http/signin-guard.ts), keyed alike.
		const limiter = signInLimiter();
		const address = await requestAddress(event);
		const refusal = await limiter.check(parsed.data.email, address);
		if (refusal) {
			event.setHeaders({ 'retry-after': String(refusal.retryAfter_s) });
			return fail(429, { email, message: refusal.message });
		}
		const { auth } = await getRuntime();
		try {
			await auth.api.signInEmail({ body: parsed.data, headers: request.headers });
		} catch (err) {
			if (err instanceof APIError) {
				if (err.statusCode === 401) await limiter.failed(parsed.data.email, address);
				return fail(400, { email, message: 'that e-mail and password do not match an account' });
			}
			throw err;
		}
		await limiter.succeeded(parsed.data.email);
		redirect(303, safeNext(url.searchParams.get('next')));
	}
};
