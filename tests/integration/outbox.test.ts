// The outbox over the real server: a mail outage and a restart lose nothing and send nothing twice;
// a kill -9 in the middle of a send loses nothing; only admins see and retry deliveries.
import http from 'node:http';
import net from 'node:net';
import { afterEach, describe, expect, it } from 'vitest';
import { startMailCatcher, type MailCatcher } from '../../src/lib/server/notify/catcher';
import { lockLossRun } from './support/lock-loss';
import { poll } from './support/poll';
import { freePort, people, seedDataDir, signIn, startServer, type RunningServer } from './support/server';

type Delivery = {
	id: string;
	incidentId: string | null;
	kind: string;
	channel: string;
	recipient: string;
	status: string;
	attempts: number;
	lastError: string | null;
	attemptLog: { outcome: string }[];
};

const FAST_RETRY = { PHASEWARDEN_OUTBOX_POLL_S: '0.2', PHASEWARDEN_OUTBOX_RETRY_S: '0.3' };
const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

async function deliveries(server: RunningServer, query = ''): Promise<Delivery[]> {
	const admin = await signIn(server, 'admin');
	const res = await admin(`/api/deliveries?limit=200${query}`);
	expect(res.status).toBe(200);
	return (await res.json()).deliveries;
}

/** The outbox id an e-mail carries as its Message-ID. */
const outboxIdOf = (messageId: string | undefined) => /^<?([\w-]+)@outbox\.phasewarden>?$/.exec(messageId ?? '')?.[1];

describe('mail outage', () => {
	it('delivers every alert exactly once after the mail server returns, across a restart mid-outage', async () => {
		const seeded = await seedDataDir();
		const smtpPort = await freePort();
		const env = { ...FAST_RETRY, SMTP_URL: `smtp://127.0.0.1:${smtpPort}` };
		let server = await startServer(seeded.dataDir, undefined, env);
		cleanup.push(() => server.stop());

		// Two lock losses while nothing listens on the SMTP port.
		await lockLossRun(server.wsUrl, seeded.token, 'outage-1', { recover: true });
		await lockLossRun(server.wsUrl, seeded.token, 'outage-2');
		const failing = await poll('e-mails retried and still pending', async () => {
			const rows = (await deliveries(server, '&channel=email')).filter((d) => d.kind === 'alert');
			return rows.length >= 4 && rows.every((d) => d.status === 'pending' && d.attempts >= 2) ? rows : null;
		});
		expect(failing[0].lastError).toMatch(/ECONNREFUSED/);
		// Operator and admin, two incidents.
		expect(new Set(failing.map((d) => d.recipient)).size).toBe(2);
		expect(new Set(failing.map((d) => d.incidentId)).size).toBe(2);

		// A restart in the middle of the outage.
		await server.stop();
		server = await startServer(seeded.dataDir, server.port, env);
		const catcher: MailCatcher = await startMailCatcher({ port: smtpPort });
		cleanup.push(() => catcher.close());

		const all = await poll('every e-mail sent', async () => {
			const rows = await deliveries(server, '&channel=email');
			return rows.length >= 5 && rows.every((d) => d.status === 'sent') ? rows : null;
		});
		// Give a duplicate the chance to show up before counting.
		await new Promise((r) => setTimeout(r, 1500));
		const mails = catcher.messages();
		const ids = mails.map((m) => outboxIdOf(m.messageId));
		expect(ids.every(Boolean)).toBe(true);
		expect(new Set(ids).size).toBe(ids.length);
		expect(ids.sort()).toEqual(all.map((d) => d.id).sort());
		// The first run recovered: its clear notice went out too, after the alerts.
		expect(all.filter((d) => d.kind === 'clear').length).toBeGreaterThanOrEqual(2);
		expect(mails.some((m) => /cleared/i.test(m.subject))).toBe(true);
		for (const m of mails) expect([people.admin.email, people.operator.email]).toContain(m.to[0]);
	}, 120_000);
});

describe('kill -9 in the middle of a send', () => {
	it('sends the alert after the restart', async () => {
		const seeded = await seedDataDir();
		// A mail server that accepts the connection and never says a word.
		const sockets: net.Socket[] = [];
		const silent = net.createServer((s) => void sockets.push(s));
		await new Promise<void>((r) => silent.listen(0, '127.0.0.1', () => r()));
		const silentPort = (silent.address() as net.AddressInfo).port;
		cleanup.push(() => new Promise((r) => (sockets.forEach((s) => s.destroy()), silent.close(r))));

		const server = await startServer(seeded.dataDir, undefined, { ...FAST_RETRY, SMTP_URL: `smtp://127.0.0.1:${silentPort}` });
		cleanup.push(() => server.stop());
		await lockLossRun(server.wsUrl, seeded.token, 'killed-mid-send');
		const inFlight = await poll('an e-mail in flight', async () => {
			const rows = await deliveries(server, '&channel=email&status=sending');
			return rows.length > 0 ? rows : null;
		});
		await server.kill9();

		const smtpPort = await freePort();
		const catcher = await startMailCatcher({ port: smtpPort });
		cleanup.push(() => catcher.close());
		const restarted = await startServer(seeded.dataDir, undefined, { ...FAST_RETRY, SMTP_URL: `smtp://127.0.0.1:${smtpPort}` });
		cleanup.push(() => restarted.stop());
		const sent = await poll('the in-flight e-mail sent after the restart', async () => {
			const rows = await deliveries(restarted, '&channel=email');
			const row = rows.find((d) => d.id === inFlight[0].id);
			return row?.status === 'sent' ? row : null;
		});
		expect(sent.attempts).toBeGreaterThanOrEqual(2);
		const mail = await catcher.waitFor((m) => outboxIdOf(m.messageId) === inFlight[0].id);
		expect(mail.subject).toMatch(/lock/i);
	}, 120_000);
});

describe('admin deliveries', () => {
	it('lists and retries for admins only', async () => {
		const seeded = await seedDataDir();
		// A webhook receiver that refuses at first (a permanent failure), then accepts.
		let accept = false;
		const received: string[] = [];
		const hookServer = http.createServer((req, res) => {
			req.resume();
			req.on('end', () => {
				if (accept) received.push(String(req.headers['x-phasewarden-delivery']));
				res.writeHead(accept ? 204 : 400).end();
			});
		});
		await new Promise<void>((r) => hookServer.listen(0, '127.0.0.1', () => r()));
		cleanup.push(() => new Promise((r) => hookServer.close(r)));
		const server = await startServer(seeded.dataDir, undefined, FAST_RETRY);
		cleanup.push(() => server.stop());
		const operator = await signIn(server, 'operator');
		const added = await operator(`/api/setups/${seeded.setupId}/webhooks`, {
			method: 'POST',
			body: JSON.stringify({ url: `http://127.0.0.1:${(hookServer.address() as net.AddressInfo).port}/hook` })
		});
		expect(added.status).toBe(201);

		await lockLossRun(server.wsUrl, seeded.token, 'admin-retry');
		const row = await poll('the refused webhook delivery', async () => {
			const rows = await deliveries(server, '&channel=webhook');
			return rows.find((d) => d.status === 'failed');
		});
		expect(row.lastError).toMatch(/400/);
		expect(row.attemptLog.map((a) => a.outcome)).toEqual(['failed']);

		for (const who of ['observer', 'operator'] as const) {
			const as = await signIn(server, who);
			expect((await as('/api/deliveries')).status).toBe(403);
			expect((await as(`/api/deliveries/${row.id}/retry`, { method: 'POST' })).status).toBe(403);
			const page = await as('/admin/deliveries', { headers: { accept: 'text/html' } });
			expect(page.status).toBe(403);
		}
		const admin = await signIn(server, 'admin');
		expect((await admin('/api/deliveries/no-such-id/retry', { method: 'POST' })).status).toBe(404);
		const page = await admin('/admin/deliveries', { headers: { accept: 'text/html' } });
		expect(page.status).toBe(200);
		expect(await page.text()).toContain('webhook answered HTTP 400');

		accept = true;
		expect((await admin(`/api/deliveries/${row.id}/retry`, { method: 'POST' })).status).toBe(200);
		const sent = await poll('the retried delivery sent', async () => {
			const again = (await deliveries(server, '&channel=webhook')).find((d) => d.id === row.id);
			return again?.status === 'sent' ? again : null;
		});
		expect(sent.attemptLog.map((a) => a.outcome)).toEqual(['failed', 'sent']);
		expect(received).toEqual([row.id]);
	}, 120_000);
});
