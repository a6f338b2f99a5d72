import { error } from '@sveltejs/kit';
import { mayInvite } from '$lib/people/forms';
import { isRole } from '$lib/roles';
import { json, requireRole } from '$lib/server/http/guard';
import { findInvitation, revokeInvitation } from '$lib/server/people/invitations';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

/** Withdraws a pending invitation; whoever may send an invitation of that role may withdraw it. */
export const DELETE: RequestHandler = async (event) => {
	const me = requireRole(event, 'operator');
	const { db } = await getRuntime();
	const found = await findInvitation(db, event.params.id);
	if (!found) error(404, 'no invitation with this id');
	if (!isRole(found.role) || !mayInvite(me.role, found.role)) error(403, `only an admin can withdraw an invitation as ${found.role}`);
	const revoked = await revokeInvitation(db, event.params.id);
	if (!revoked) error(409, 'this invitation was already used or withdrawn');
	return json({ invitation: revoked });
};
