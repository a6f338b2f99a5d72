// Accepting an invitation: the invitee chooses their name and password; the account gets the invited role.
import { error, redirect } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { acceptInviteSchema } from '$lib/people/forms';
import { addUser } from '$lib/server/auth/users';
import { claimInvitation, findUsableInvitation, releaseInvitation } from '$lib/server/people/invitations';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

const GONE = 'This invitation link has expired, was withdrawn or was already used. Ask whoever invited you for a new one.';

export const load: PageServerLoad = async ({ params }) => {
	const { db } = await getRuntime();
	const invitation = await findUsableInvitation(db, params.token);
	if (!invitation) error(410, GONE);
	return { invitation: { email: invitation.email, role: invitation.role }, form: await superValidate(zod4(acceptInviteSchema)) };
};

export const actions: Actions = {
	accept: async ({ request, params }) => {
		const form = await superValidate(request, zod4(acceptInviteSchema));
		if (!form.valid) return fail(400, { form });
		const { db, auth } = await getRuntime();
		const invitation = await claimInvitation(db, params.token);
		if (!invitation) return message(form, GONE, { status: 410 });
		const { name, password } = form.data;
		try {
			await addUser(auth, { email: invitation.email, name, role: invitation.role, password });
		} catch (err) {
			await releaseInvitation(db, invitation.id);
			if (err instanceof APIError) return message(form, `Could not create the account: ${err.message}`, { status: 400 });
			throw err;
		}
		// Signed in straight away (the session cookie is set through better-auth's SvelteKit plugin).
		await auth.api.signInEmail({ body: { email: invitation.email, password }, headers: request.headers });
		redirect(303, '/');
	}
};
