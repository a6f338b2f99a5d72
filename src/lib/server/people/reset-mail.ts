// better-auth's sendResetPassword hook: mails our own /reset-password page rather than the library's
// redirect route, so the link is one plain URL. Deactivated people get nothing (they cannot sign in),
// and an address gets at most one reset mail a minute.
import type { Mailer } from '../notify/mailer';
import { createCooldown } from './cooldown';
import { passwordResetMail } from './mail';

export const RESET_TTL_S = 60 * 60;
const RESET_MAIL_COOLDOWN_MS = 60_000;
const cooldown = createCooldown(RESET_MAIL_COOLDOWN_MS);

export function resetPasswordSender(mailer: Mailer | null, origin: () => string) {
	return async ({ user, token }: { user: { email: string; banned?: boolean | null }; token: string }) => {
		if (user.banned || !cooldown.take(user.email.toLowerCase())) return;
		if (!mailer) {
			console.warn('password reset asked for, but no mail server is set (SMTP_URL or PHASEWARDEN_CATCHER=1)');
			return;
		}
		const link = `${origin()}/reset-password/${encodeURIComponent(token)}`;
		const result = await mailer.send(passwordResetMail({ to: user.email, link, validFor_min: RESET_TTL_S / 60 }));
		if (!result.ok) console.error(`password reset mail not sent: ${result.error}`);
	};
}
