// Push, text and webhook over the real server with the local push catcher and SMS fake, and a
// webhook receiver in this test: what arrives, decrypted, and what the server does with a 410.
import { createECDH, createHmac, randomBytes } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { lockLossRun } from './support/lock-loss';
import { poll } from './support/poll';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;
type Caught = { id: number; endpoint: string; vapidKey: string | null; urgency: string | null; payload: any };

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_OUTBOX_POLL_S: '0.2', PHASEWARDEN_OUTBOX_RETRY_S: '0.3' });
}, 60_000);
afterAll(async () => {
	await server?.stop();
});

async function caughtPushes(): Promise<{ endpointBase: string; messages: Caught[] }> {
	const operator = await signIn(server, 'operator');
	const res = await operator('/api/dev/push');
	expect(res.status).toBe(200);
	return res.json();
}

describe('web push', () => {
	it('keeps the VAPID keys in the data folder, readable by the owner only', () => {
		const file = path.join(seeded.dataDir, 'vapid.json');
		const keys = JSON.parse(readFileSync(file, 'utf8'));
		expect(keys.publicKey).toMatch(/^[\w-]{80,}$/);
		// 0600: the private key must not be readable by other accounts on the lab PC.
		expect((statSync(file).mode & 0o777).toString(8)).toBe('600');
	});

	it('sends a test push that the catcher decrypts, signed with the server key', async () => {
		const operator = await signIn(server, 'operator');
		const device = await operator('/api/dev/push/devices', { method: 'POST' });
		expect(device.status).toBe(201);
		const { subscription } = await device.json();
		expect((await operator('/api/push/test', { method: 'POST' })).status).toBe(202);
		const pushed = await poll('the test push', async () =>
			(await caughtPushes()).messages.find((m) => m.endpoint === subscription.endpoint)
		);
		expect(pushed.payload.title).toBe('Phasewarden test');
		const { publicKey } = await (await operator('/api/push/key')).json();
		expect(pushed.vapidKey).toBe(publicKey);
	});

	it('pushes an alert with the incident link and an Acknowledge action', async () => {
		const runId = await lockLossRun(server.wsUrl, seeded.token, 'push-alert');
		const alert = await poll('the alert push', async () =>
			(await caughtPushes()).messages.find((m) => m.payload.actions?.length && m.payload.title.includes('Lock lost'))
		);
		const observer = await signIn(server, 'observer');
		const { incidents } = await (await observer(`/api/incidents?run=${runId}&kind=lock_lost`)).json();
		expect(alert.payload.title).toMatch(/^Critical: Lock lost · Test fridge/);
		expect(alert.payload.url).toBe(`${server.url}/incidents/${incidents[0].id}`);
		expect(alert.payload.actions[0]).toMatchObject({ action: 'acknowledge', title: 'Acknowledge' });
		// The action is a one-tap acknowledge link, not the incident page behind a sign-in.
		expect(alert.payload.actions[0].url).toMatch(new RegExp(`^${server.url}/ack/[\\w-]+\\.[\\w-]+$`));
		expect(alert.urgency).toBe('high');
		expect(alert.payload.body.length).toBeLessThanOrEqual(140);
	});

	it('drops a subscription the push service answers 410 for', async () => {
		const { endpointBase } = await caughtPushes();
		const observer = await signIn(server, 'observer');
		const ecdh = createECDH('prime256v1');
		ecdh.generateKeys();
		const registered = await observer('/api/push/subscriptions', {
			method: 'POST',
			body: JSON.stringify({
				endpoint: `${endpointBase}expired-device`,
				keys: { p256dh: ecdh.getPublicKey('base64url'), auth: randomBytes(16).toString('base64url') },
				label: 'old phone'
			})
		});
		expect(registered.status).toBe(201);
		expect((await (await observer('/api/push/subscriptions')).json()).subscriptions).toHaveLength(1);
		expect((await observer('/api/push/test', { method: 'POST' })).status).toBe(202);
		await poll(
			'the subscription to be dropped',
			async () => (await (await observer('/api/push/subscriptions')).json()).subscriptions.length === 0
		);
	});

	it('refuses a plain-http endpoint outside this machine', async () => {
		const observer = await signIn(server, 'observer');
		const res = await observer('/api/push/subscriptions', {
			method: 'POST',
			body: JSON.stringify({ endpoint: 'http://push.example/abc', keys: { p256dh: 'B'.repeat(87), auth: 'A'.repeat(22) } })
		});
		expect(res.status).toBe(400);
		expect((await res.json()).message).toMatch(/https/);
	});
});

describe('text messages', () => {
	it('verifies a number with a texted code, then texts critical alerts to it', async () => {
		const admin = await signIn(server, 'admin');
		const number = '+41445550123';
		expect((await admin('/api/phone', { method: 'PUT', body: JSON.stringify({ number: '+41 44 555 01 23' }) })).status).toBe(202);
		const sms = async () => (await (await admin('/api/dev/sms')).json()).messages as { to: string; body: string }[];
		const codeText = await poll('the code text', async () => (await sms()).find((m) => m.to === number && /code/.test(m.body)));
		const code = /(\d{6})/.exec(codeText.body)![1];
		const wrong = code === '000000' ? '111111' : '000000';
		expect((await admin('/api/phone/verify', { method: 'POST', body: JSON.stringify({ code: wrong }) })).status).toBe(400);
		const verified = await admin('/api/phone/verify', { method: 'POST', body: JSON.stringify({ code }) });
		expect(verified.status).toBe(200);
		expect((await verified.json()).phone.verifiedAt).toBeTruthy();

		await lockLossRun(server.wsUrl, seeded.token, 'sms-alert');
		const alert = await poll('the alert text', async () =>
			(await sms()).find((m) => m.to === number && /CRITICAL: Lock lost/.test(m.body))
		);
		expect(alert.body).toContain(`${server.url}/incidents/`);
	});

	it('refuses a number that is not in international form', async () => {
		const operator = await signIn(server, 'operator');
		const res = await operator('/api/phone', { method: 'PUT', body: JSON.stringify({ number: '044 555 01 23' }) });
		expect(res.status).toBe(400);
		expect((await res.json()).message).toMatch(/international/);
	});
});

describe('webhook', () => {
	it('POSTs a JSON alert whose HMAC-SHA256 signature verifies with the secret', async () => {
		const received: { headers: http.IncomingHttpHeaders; body: string }[] = [];
		const receiver = http.createServer((req, res) => {
			let body = '';
			req.on('data', (c) => (body += c));
			req.on('end', () => {
				received.push({ headers: req.headers, body });
				res.writeHead(204).end();
			});
		});
		await new Promise<void>((r) => receiver.listen(0, '127.0.0.1', () => r()));
		try {
			const operator = await signIn(server, 'operator');
			const url = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/phasewarden`;
			const added = await operator(`/api/setups/${seeded.setupId}/webhooks`, {
				method: 'POST',
				body: JSON.stringify({ url, label: 'test receiver' })
			});
			expect(added.status).toBe(201);
			const { secret, webhook } = await added.json();
			expect(secret).toMatch(/^pwh_/);
			// Shown once: the list gives only its first characters.
			const listed = await (await operator(`/api/setups/${seeded.setupId}/webhooks`)).json();
			expect(JSON.stringify(listed)).not.toContain(secret);
			expect((await (await signIn(server, 'observer'))(`/api/setups/${seeded.setupId}/webhooks`)).status).toBe(403);

			await lockLossRun(server.wsUrl, seeded.token, 'webhook-alert');
			const hit = await poll('the webhook POST', async () => received.find((r) => JSON.parse(r.body).event === 'incident.opened'));
			expect(hit.headers['content-type']).toBe('application/json');
			const timestamp = String(hit.headers['x-phasewarden-timestamp']);
			// Computed here with node:crypto, independently of the server's code.
			const expected = `sha256=${createHmac('sha256', secret).update(`${timestamp}.${hit.body}`).digest('hex')}`;
			expect(hit.headers['x-phasewarden-signature']).toBe(expected);
			const tampered = `sha256=${createHmac('sha256', secret)
				.update(`${timestamp}.${hit.body.replace('critical', 'warning')}`)
				.digest('hex')}`;
			expect(tampered).not.toBe(expected);
			const payload = JSON.parse(hit.body);
			expect(payload.incident).toMatchObject({ kind: 'lock_lost', severity: 'critical' });
			expect(payload.delivery).toBe(hit.headers['x-phasewarden-delivery']);

			expect((await operator(`/api/setups/${seeded.setupId}/webhooks/${webhook.id}`, { method: 'DELETE' })).status).toBe(200);
		} finally {
			await new Promise((r) => receiver.close(r));
		}
	});
});

describe('pages', () => {
	it('renders the settings page, the webhooks panel and the caught messages for the right roles', async () => {
		const html = { headers: { accept: 'text/html' } };
		const observer = await signIn(server, 'observer');
		const settings = await observer('/settings', html);
		expect(settings.status).toBe(200);
		const settingsHtml = await settings.text();
		expect(settingsHtml).toContain('Push on your devices');
		expect(settingsHtml).toContain('Texts for critical alerts');
		expect((await observer('/dev/inbox', html)).status).toBe(403);
		expect(await (await observer(`/setups/${seeded.setupId}`, html)).text()).not.toContain('Add webhook');

		const operator = await signIn(server, 'operator');
		expect(await (await operator(`/setups/${seeded.setupId}`, html)).text()).toContain('Add webhook');
		const inbox = await operator('/dev/inbox', html);
		expect(inbox.status).toBe(200);
		// Earlier tests in this file sent a test push and a lock-loss alert.
		const inboxHtml = await inbox.text();
		expect(inboxHtml).toContain('Phasewarden test');
		expect(inboxHtml).toContain('Acknowledge');
	});

	it('serves the service worker without a session', async () => {
		const res = await fetch(`${server.url}/service-worker.js`);
		expect(res.status).toBe(200);
		expect(await res.text()).toContain('notificationclick');
	});
});
