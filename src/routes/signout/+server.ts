// Sign-out is a POST (a form in the header), never a GET that a prefetch could trigger.
import { redirect } from '@sveltejs/kit';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request }) => {
	const { auth } = await getRuntime();
	await auth.api.signOut({ headers: request.headers });
	redirect(303, '/signin');
};
