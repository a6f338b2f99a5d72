// A local fake of the SMS service's Messages endpoint (PHASEWARDEN_CATCHER=1): it answers what the
// twilio SDK expects from POST /2010-04-01/Accounts/{sid}/Messages.json and keeps each message for
// /api/dev/sms. It checks the Basic credentials so a wrongly wired client fails here too.
import { randomBytes } from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';

export type CaughtSms = { id: number; sid: string; to: string; from: string; body: string; receivedAt: Date };

export type SmsFake = {
	port: number;
	baseUrl: string;
	accountSid: string;
	authToken: string;
	from: string;
	messages(): CaughtSms[];
	/** While down, every request gets 503 (to test retries). */
	setDown(down: boolean): void;
	close(): Promise<void>;
};

export async function startSmsFake(): Promise<SmsFake> {
	const accountSid = `AC${randomBytes(16).toString('hex')}`;
	const authToken = randomBytes(16).toString('hex');
	const from = '+15005550006';
	const caught: CaughtSms[] = [];
	let down = false;
	let nextId = 1;

	const server = http.createServer((req, res) => {
		const reply = (status: number, body: unknown) =>
			res.writeHead(status, { 'content-type': 'application/json' }).end(JSON.stringify(body));
		const chunks: Buffer[] = [];
		req.on('data', (c: Buffer) => chunks.push(c));
		req.on('end', () => {
			if (down) return reply(503, { code: 20503, message: 'service unavailable (fake is down)', status: 503 });
			const path = (req.url ?? '').split('?')[0];
			if (req.method !== 'POST' || path !== `/2010-04-01/Accounts/${accountSid}/Messages.json`) {
				return reply(404, { code: 20404, message: `no such resource: ${req.method} ${path}`, status: 404 });
			}
			const expected = `Basic ${Buffer.from(`${accountSid}:${authToken}`).toString('base64')}`;
			if (req.headers.authorization !== expected) return reply(401, { code: 20003, message: 'authentication failed', status: 401 });
			const form = new URLSearchParams(Buffer.concat(chunks).toString('utf8'));
			const to = form.get('To') ?? '';
			const body = form.get('Body') ?? '';
			if (!/^\+[1-9]\d{6,14}$/.test(to)) return reply(400, { code: 21211, message: `invalid 'To' phone number: ${to}`, status: 400 });
			if (!body) return reply(400, { code: 21602, message: 'message body is required', status: 400 });
			const sms: CaughtSms = {
				id: nextId++,
				sid: `SM${randomBytes(16).toString('hex')}`,
				to,
				from: form.get('From') ?? '',
				body,
				receivedAt: new Date()
			};
			caught.push(sms);
			reply(201, {
				sid: sms.sid,
				account_sid: accountSid,
				to,
				from: sms.from,
				body,
				status: 'queued',
				date_created: sms.receivedAt.toUTCString()
			});
		});
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(0, '127.0.0.1', () => resolve());
	});
	const port = (server.address() as AddressInfo).port;
	return {
		port,
		baseUrl: `http://127.0.0.1:${port}`,
		accountSid,
		authToken,
		from,
		messages: () => caught.map((m) => ({ ...m, receivedAt: new Date(m.receivedAt) })),
		setDown: (d) => {
			down = d;
		},
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
