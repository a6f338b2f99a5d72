// Sends e-mail through the SMTP server that SMTP_URL names. A failed delivery is an outcome to
// record, never an exception: an unreachable mail server must not stop ingest or incidents.
import nodemailer from 'nodemailer';
import { isLoopbackHost } from '../http/loopback';

export type MailMessage = {
	to: string | string[];
	subject: string;
	text: string;
	html?: string;
	/** Set by the outbox to its row id, so a message sent twice after a crash is recognisable. */
	messageId?: string;
	headers?: Record<string, string>;
};
/** `permanent`: the server refused for good (a 5xx reply); trying again would not help. */
export type SendResult = { ok: true; messageId?: string } | { ok: false; error: string; permanent?: boolean };

export interface Mailer {
	send(message: MailMessage): Promise<SendResult>;
	close(): void;
}

/**
 * `smtpUrl` is `smtp://[user:password@]host[:port]` or `smtps://…` (TLS from the first byte).
 * A bad URL is a configuration error and throws at start-up, naming the setting.
 */
export function createMailer({ smtpUrl, from }: { smtpUrl: string; from: string }): Mailer {
	let url: URL;
	try {
		url = new URL(smtpUrl);
	} catch {
		throw new RangeError(`SMTP_URL: not a URL: ${JSON.stringify(smtpUrl)}`);
	}
	if (url.protocol !== 'smtp:' && url.protocol !== 'smtps:') {
		throw new RangeError(`SMTP_URL: expected smtp:// or smtps://, got ${url.protocol}//`);
	}
	if (!url.hostname) throw new RangeError('SMTP_URL: the host is missing');
	if (!from || !from.includes('@'))
		throw new RangeError(`MAIL_FROM: expected an address such as alerts@lab.example, got ${JSON.stringify(from)}`);

	const secure = url.protocol === 'smtps:';
	const host = url.hostname.replace(/^\[(.*)\]$/, '$1');
	const transport = nodemailer.createTransport({
		host,
		port: url.port ? Number(url.port) : secure ? 465 : 587,
		secure,
		// A catcher on this machine speaks plain SMTP; anything else may upgrade with STARTTLS.
		ignoreTLS: isLoopbackHost(url.hostname),
		...(url.username ? { auth: { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } } : {}),
		connectionTimeout: 10_000,
		greetingTimeout: 10_000,
		socketTimeout: 30_000
	});

	return {
		async send({ to, subject, text, html, messageId, headers }) {
			try {
				const info = await transport.sendMail({
					from,
					to,
					subject,
					text,
					...(html ? { html } : {}),
					...(messageId ? { messageId } : {}),
					...(headers ? { headers } : {})
				});
				const rejected = (info.rejected ?? []).map(String);
				if (rejected.length > 0) return { ok: false, error: `rejected by the mail server: ${rejected.join(', ')}`, permanent: true };
				return { ok: true, ...(info.messageId ? { messageId: info.messageId } : {}) };
			} catch (err) {
				const e = err as Error & { code?: string; responseCode?: number };
				const permanent = typeof e.responseCode === 'number' && e.responseCode >= 500;
				return { ok: false, error: e.code ? `${e.code}: ${e.message}` : e.message || String(err), permanent };
			}
		},
		close: () => transport.close()
	};
}
