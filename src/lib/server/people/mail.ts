// The texts of the two account e-mails. Plain text only: links must survive any mail client.
import type { MailMessage } from '../notify/mailer';

export function invitationMail(input: {
	to: string;
	role: string;
	inviterName: string | null;
	link: string;
	expiresAt: Date;
}): MailMessage {
	const who = input.inviterName ?? 'An admin';
	return {
		to: input.to,
		subject: 'You are invited to Phasewarden',
		text: [
			`${who} invited you to Phasewarden as ${input.role}.`,
			'',
			'Choose your name and password here (the link works once):',
			input.link,
			'',
			`The link expires ${input.expiresAt.toISOString().replace('T', ' ').slice(0, 16)} UTC.`,
			'If you did not expect this, ignore this message; no account is made until the link is used.'
		].join('\n')
	};
}

export function passwordResetMail(input: { to: string; link: string; validFor_min: number }): MailMessage {
	return {
		to: input.to,
		subject: 'Set a new Phasewarden password',
		text: [
			'Someone asked to reset the password of your Phasewarden account.',
			'',
			`Set a new one here (the link works once, for ${input.validFor_min} minutes):`,
			input.link,
			'',
			'Setting a new password signs you out everywhere.',
			'If you did not ask for this, ignore this message; your password stays as it is.'
		].join('\n')
	};
}
