import { error } from '@sveltejs/kit';
import { inviteSchema } from '$lib/people/forms';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { InvitationError, listPendingInvitations } from '$lib/server/people/invitations';
import { inviteAndMail } from '$lib/server/people/invite';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { db } = await getRuntime();
	return json({ invitations: await listPendingInvitations(db) });
};

export const POST: RequestHandler = async (event) => {
	const me = requireRole(event, 'operator');
	const input = await readJson(event.request, inviteSchema);
	const { db, mailer, config } = await getRuntime();
	try {
		const invitation = await inviteAndMail({ db, mailer, origin: config.origin ?? event.url.origin, ttl_s: config.inviteTtl_s }, me, input);
		return json({ invitation }, { status: 201 });
	} catch (err) {
		if (err instanceof InvitationError) error(err.field === 'role' ? 403 : 400, err.message);
		throw err;
	}
};
