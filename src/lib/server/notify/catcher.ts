// A local SMTP catcher for development, demo and tests: accepts every message on 127.0.0.1 and
// keeps it in memory, so alerts can be read without a real mail server.
import type { AddressInfo } from 'node:net';
import { SMTPServer } from 'smtp-server';
import { parseMail } from './mime';

export type CaughtMail = {
	/** Position in arrival order, from 1. */
	id: number;
	/** The From header as written (display name and address). */
	from: string;
	/** Envelope recipients: who the message was really delivered to. */
	to: string[];
	subject: string;
	text?: string;
	html?: string;
	messageId?: string;
	headers: Record<string, string>;
	envelope: { from: string | null; to: string[] };
	receivedAt: Date;
	/** The message as received, for when the parsed view is not enough. */
	raw: string;
};

export type MailCatcher = {
	port: number;
	/** Every message caught so far, oldest first (copies: changing them changes nothing here). */
	messages(): CaughtMail[];
	clear(): void;
	/** Resolves with the first message (already caught or arriving later) that matches. */
	waitFor(match: (mail: CaughtMail) => boolean, timeout_ms?: number): Promise<CaughtMail>;
	close(): Promise<void>;
};

const MAX_MESSAGE_BYTES = 25 * 1024 * 1024;

export async function startMailCatcher({ port = 0 }: { port?: number } = {}): Promise<MailCatcher> {
	if (!Number.isInteger(port) || port < 0 || port > 65_535) {
		throw new RangeError(`mail catcher: port must be an integer from 0 to 65535, got ${String(port)}`);
	}
	const caught: CaughtMail[] = [];
	const waiters = new Set<(mail: CaughtMail) => void>();
	let nextId = 1;
	let parsing: Promise<void> = Promise.resolve();

	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		banner: 'Phasewarden mail catcher',
		size: MAX_MESSAGE_BYTES,
		logger: false,
		closeTimeout: 1000,
		// Any credentials are fine: the catcher stands in for whatever server SMTP_URL names.
		onAuth(auth, _session, callback) {
			callback(null, { user: auth.username ?? 'anonymous' });
		},
		onData(stream, session, callback) {
			const chunks: Buffer[] = [];
			stream.on('data', (chunk: Buffer) => chunks.push(chunk));
			stream.on('error', (err) => callback(err));
			stream.on('end', () => {
				if (stream.sizeExceeded) {
					callback(Object.assign(new Error('message too large for the catcher'), { responseCode: 552 }));
					return;
				}
				const raw = Buffer.concat(chunks).toString('utf8');
				const envelope = {
					from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
					to: session.envelope.rcptTo.map((r) => r.address)
				};
				// Parsing is asynchronous: chained, so messages keep their order of arrival.
				parsing = parsing
					.then(() => parseMail(raw))
					.then(
						(parsed) => {
							const mail: CaughtMail = {
								id: nextId++,
								from: parsed.from || envelope.from || '',
								to: envelope.to,
								subject: parsed.subject,
								...(parsed.text === undefined ? {} : { text: parsed.text }),
								...(parsed.html === undefined ? {} : { html: parsed.html }),
								...(parsed.messageId === undefined ? {} : { messageId: parsed.messageId }),
								headers: parsed.headers,
								envelope,
								receivedAt: new Date(),
								raw
							};
							caught.push(mail);
							callback();
							for (const notify of [...waiters]) notify(mail);
						},
						(err: Error) => callback(err)
					)
					.catch((err: Error) => console.warn(`mail catcher: ${err.message}`));
			});
		}
	});

	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(port, '127.0.0.1', () => {
			server.off('error', reject);
			resolve();
		});
	});
	// A client that misbehaves must not bring the app down with it.
	server.on('error', (err) => console.warn(`mail catcher: ${err.message}`));

	const copy = (m: CaughtMail): CaughtMail => ({
		...m,
		to: [...m.to],
		headers: { ...m.headers },
		envelope: { from: m.envelope.from, to: [...m.envelope.to] },
		receivedAt: new Date(m.receivedAt)
	});

	return {
		port: (server.server.address() as AddressInfo).port,
		messages: () => caught.map(copy),
		clear: () => {
			caught.length = 0;
		},
		waitFor(match, timeout_ms = 10_000) {
			const found = caught.find(match);
			if (found) return Promise.resolve(copy(found));
			return new Promise((resolve, reject) => {
				const timer = setTimeout(() => {
					waiters.delete(listener);
					reject(new Error(`mail catcher: no matching message within ${timeout_ms} ms (${caught.length} caught)`));
				}, timeout_ms);
				const listener = (mail: CaughtMail) => {
					if (!match(mail)) return;
					clearTimeout(timer);
					waiters.delete(listener);
					resolve(copy(mail));
				};
				waiters.add(listener);
			});
		},
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
