// Inviting someone: the rule on who may invite whom, the invitation row and its e-mail, shared by
// the JSON API and the page action so both answer the same way.
import { mayInvite } from '../../people/forms';
import type { Role } from '../../roles';
import type { SessionUser } from '../auth/session';
import type { Db } from '../db';
import type { Mailer } from '../notify/mailer';
import { createInvitation, InvitationError, revokeInvitation } from './invitations';
import { invitationMail } from './mail';

export interface InviteDeps {
	db: Db;
	mailer: Mailer | null;
	origin: string;
	ttl_s: number;
}

export async function inviteAndMail(deps: InviteDeps, inviter: SessionUser, input: { email: string; role: Role }) {
	if (!mayInvite(inviter.role, input.role))
		throw new InvitationError('role', `only an admin can invite an ${input.role}; you are ${inviter.role}`);
	if (!deps.mailer) throw new InvitationError('email', 'no mail server is set (SMTP_URL), so an invitation cannot be sent');
	const { invitation, secret } = await createInvitation(deps.db, { ...input, invitedBy: inviter.id, ttl_s: deps.ttl_s });
	const link = `${deps.origin}/invite/${encodeURIComponent(secret)}`;
	const sent = await deps.mailer.send(
		invitationMail({ to: invitation.email, role: input.role, inviterName: inviter.name, link, expiresAt: invitation.expiresAt })
	);
	// The link exists only in that e-mail: an invitation nobody received is withdrawn rather than left dangling.
	if (!sent.ok) {
		await revokeInvitation(deps.db, invitation.id);
		throw new InvitationError('email', `the invitation could not be mailed (${sent.error})`);
	}
	return invitation;
}
