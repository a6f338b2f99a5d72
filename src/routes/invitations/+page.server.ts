// Inviting people (operators and admins) and withdrawing pending invitations.
import { error, fail as kitFail } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { inviteSchema, mayInvite } from '$lib/people/forms';
import { isRole } from '$lib/roles';
import { requireRole } from '$lib/server/http/guard';
import { findInvitation, InvitationError, listPendingInvitations, revokeInvitation } from '$lib/server/people/invitations';
import { inviteAndMail } from '$lib/server/people/invite';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	return { invitations: await listPendingInvitations(db), form: await superValidate(zod4(inviteSchema)) };
};

export const actions: Actions = {
	invite: async (event) => {
		const me = requireRole(event, 'operator');
		const form = await superValidate(event.request, zod4(inviteSchema));
		if (!form.valid) return fail(400, { form });
		const { db, mailer, config } = await getRuntime();
		try {
			const invitation = await inviteAndMail(
				{ db, mailer, origin: config.origin ?? event.url.origin, ttl_s: config.inviteTtl_s },
				me,
				form.data
			);
			return message(form, `Invitation sent to ${invitation.email}.`);
		} catch (err) {
			if (!(err instanceof InvitationError)) throw err;
			return err.field === 'email' || err.field === 'role' ? setError(form, err.field, err.text) : message(form, err.text, { status: 400 });
		}
	},
	withdraw: async (event) => {
		const me = requireRole(event, 'operator');
		const id = (await event.request.formData()).get('id');
		if (typeof id !== 'string' || !id) return kitFail(400, { withdrawError: 'the form did not say which invitation' });
		const { db } = await getRuntime();
		const found = await findInvitation(db, id);
		if (!found) error(404, 'no invitation with this id');
		if (!isRole(found.role) || !mayInvite(me.role, found.role))
			return kitFail(403, { withdrawError: `only an admin can withdraw an invitation as ${found.role}` });
		await revokeInvitation(db, id);
		return { withdrawn: id };
	}
};
