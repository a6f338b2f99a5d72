// One-tap acknowledge and silences over the real server and the mail catcher: the link in the
// alert e-mail acknowledges once, as its recipient, and is refused a second time, for another
// incident, after it expires and after the incident is resolved; a silence pages nobody and ends
// by itself.
import { afterEach, describe, expect, it } from 'vitest';
import { lockLossRun } from './support/lock-loss';
import { poll } from './support/poll';
import { people, seedDataDir, signIn, startServer, type RunningServer } from './support/server';

type Mail = { to: string[]; subject: string; text?: string };
type Api = Awaited<ReturnType<typeof signIn>>;

const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

async function incidentOf(api: Api, runId: string) {
	return poll(`an incident on run ${runId}`, async () => {
		const { incidents } = (await (await api(`/api/incidents?run=${runId}`)).json()) as {
			incidents: { id: string; kind: string; state: string }[];
		};
		return incidents.find((i) => i.kind === 'lock_lost');
	});
}

/** The one-tap path from the newest alert e-mail to `to` about `incidentId` (its text names the incident page). */
async function ackLinkFor(server: RunningServer, api: Api, to: string, incidentId: string): Promise<string> {
	return poll(`an alert e-mail to ${to} with an Acknowledge line`, async () => {
		const { messages } = (await (await api('/api/dev/mail')).json()) as { messages: Mail[] };
		for (const m of [...messages].reverse()) {
			if (!m.to.includes(to) || !m.text?.includes(`/incidents/${incidentId}`)) continue;
			const line = /^Acknowledge: (\S+)$/m.exec(m.text)?.[1];
			if (line) return line.slice(server.url.length);
		}
		return null;
	});
}

/** The confirmation page's POST, as a phone without JavaScript sends it. */
const tap = (server: RunningServer, path: string) =>
	fetch(`${server.url}${path}`, {
		method: 'POST',
		redirect: 'manual',
		headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: server.url },
		body: ''
	});

describe('one-tap acknowledge', () => {
	it('acknowledges once as the recipient; refused again, for another incident, and after resolve', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir);
		cleanup.push(() => server.stop());
		const operator = await signIn(server, 'operator');

		const runA = await lockLossRun(server.wsUrl, seeded.token, 'tap-a');
		const a = await incidentOf(operator, runA);
		const link = await ackLinkFor(server, operator, people.operator.email, a.id);
		expect(link).toMatch(/^\/ack\/[\w-]+\.[\w-]+$/);

		// Looking at the link (a mail scanner's prefetch) changes nothing; it needs no session.
		const page = await fetch(`${server.url}${link}`, { redirect: 'manual' });
		expect(page.status).toBe(200);
		const html = await page.text();
		expect(html).toContain('Acknowledge this incident');
		expect(html).toContain(people.operator.name);
		expect(((await (await operator(`/api/incidents/${a.id}`)).json()) as { incident: { state: string } }).incident.state).toBe('open');

		const first = await tap(server, link);
		expect(first.status).toBe(200);
		expect(await first.text()).toContain('data-testid="ack-done"');
		expect(first.headers.getSetCookie()).toEqual([]);
		const after = (await (await operator(`/api/incidents/${a.id}`)).json()) as {
			incident: { state: string };
			events: { action: string; actorName: string | null; note: string | null }[];
		};
		expect(after.incident.state).toBe('acknowledged');
		expect(after.events).toContainEqual(
			expect.objectContaining({ action: 'acknowledged', actorName: people.operator.name, note: 'via one-tap link' })
		);

		const second = await tap(server, link);
		expect(second.status).toBe(409);
		expect(await second.text()).toMatch(/already used/);

		// Bound to its incident: the claims of another incident under this link's signature are refused.
		const runB = await lockLossRun(server.wsUrl, seeded.token, 'tap-b');
		const b = await incidentOf(operator, runB);
		const [body, sig] = link.slice('/ack/'.length).split('.');
		const claims = JSON.parse(Buffer.from(body, 'base64url').toString('utf8')) as unknown[];
		expect(claims[1]).toBe(a.id);
		const forged = `/ack/${Buffer.from(JSON.stringify([claims[0], b.id, claims[2], claims[3]])).toString('base64url')}.${sig}`;
		const forgedTap = await tap(server, forged);
		expect(forgedTap.status).toBe(409);
		expect(await forgedTap.text()).toMatch(/not signed by this Phasewarden server, or it was changed/);
		expect(((await (await operator(`/api/incidents/${b.id}`)).json()) as { incident: { state: string } }).incident.state).toBe('open');

		// After resolve: the admin's untouched link for B is refused.
		const adminLink = await ackLinkFor(server, operator, people.admin.email, b.id);
		const resolved = await operator(`/api/incidents/${b.id}/resolve`, { method: 'POST', body: JSON.stringify({ note: 'pump restarted' }) });
		expect(resolved.status).toBe(200);
		const late = await tap(server, adminLink);
		expect(late.status).toBe(409);
		expect(await late.text()).toMatch(/already resolved/);
	}, 120_000);

	it('is refused after it expires', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_ACK_LINK_TTL_S: '2' });
		cleanup.push(() => server.stop());
		const operator = await signIn(server, 'operator');
		const run = await lockLossRun(server.wsUrl, seeded.token, 'tap-expire');
		const incident = await incidentOf(operator, run);
		const link = await ackLinkFor(server, operator, people.operator.email, incident.id);
		await new Promise((r) => setTimeout(r, 2500));
		const res = await tap(server, link);
		expect(res.status).toBe(409);
		expect(await res.text()).toMatch(/expired/);
		expect(((await (await operator(`/api/incidents/${incident.id}`)).json()) as { incident: { state: string } }).incident.state).toBe(
			'open'
		);
	}, 120_000);
});

describe('silences', () => {
	it('page nobody while they hold, are noted on the incident, and end by themselves', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir);
		cleanup.push(() => server.stop());
		const operator = await signIn(server, 'operator');
		const admin = await signIn(server, 'admin');
		const observer = await signIn(server, 'observer');

		const refused = await observer('/api/silences', {
			method: 'POST',
			body: JSON.stringify({ setupId: seeded.setupId, duration_min: 1, reason: 'helium transfer' })
		});
		expect(refused.status).toBe(403);
		const created = await operator('/api/silences', {
			method: 'POST',
			body: JSON.stringify({ setupId: seeded.setupId, duration_min: 0.1, reason: 'helium transfer' })
		});
		expect(created.status).toBe(201);
		const listed = (await (await observer('/api/silences?active=1')).json()) as {
			silences: { reason: string; createdByName: string; active: boolean }[];
		};
		expect(listed.silences).toEqual([
			expect.objectContaining({ reason: 'helium transfer', createdByName: people.operator.name, active: true })
		]);

		// A second silence, ended early: it stays listed with who ended it, and ending it twice is refused.
		const early = (await (
			await operator('/api/silences', {
				method: 'POST',
				body: JSON.stringify({ setupId: seeded.setupId, kind: 'rate_drift', duration_min: 60, reason: 'pump sweep' })
			})
		).json()) as { silence: { id: string } };
		expect((await observer(`/api/silences/${early.silence.id}`, { method: 'DELETE' })).status).toBe(403);
		expect((await admin(`/api/silences/${early.silence.id}`, { method: 'DELETE' })).status).toBe(200);
		expect((await admin(`/api/silences/${early.silence.id}`, { method: 'DELETE' })).status).toBe(409);
		const all = (await (await observer('/api/silences')).json()) as {
			silences: { id: string; active: boolean; endedByName: string | null }[];
		};
		expect(all.silences.find((s) => s.id === early.silence.id)).toMatchObject({ active: false, endedByName: people.admin.name });
		const tooLong = await operator('/api/silences', {
			method: 'POST',
			body: JSON.stringify({ setupId: seeded.setupId, duration_min: 30 * 24 * 60, reason: 'forever' })
		});
		expect(tooLong.status).toBe(400);
		expect(await tooLong.text()).toMatch(/at most 14 days/);

		const quietRun = await lockLossRun(server.wsUrl, seeded.token, 'silenced');
		const quiet = await incidentOf(operator, quietRun);
		const detail = (await (await operator(`/api/incidents/${quiet.id}`)).json()) as { events: { action: string; note: string | null }[] };
		expect(detail.events.some((e) => /silenced by Test Operator \(helium transfer\)/.test(e.note ?? ''))).toBe(true);
		const none = (await (await admin(`/api/deliveries?incident=${quiet.id}`)).json()) as { deliveries: unknown[] };
		expect(none.deliveries).toEqual([]);

		// 6 s later the silence has ended by itself, and the next lock loss pages again.
		await poll('the silence to end by itself', async () => {
			const { silences } = (await (await observer('/api/silences?active=1')).json()) as { silences: unknown[] };
			return silences.length === 0;
		});
		const loudRun = await lockLossRun(server.wsUrl, seeded.token, 'after-silence');
		const loud = await incidentOf(operator, loudRun);
		const rows = (await (await admin(`/api/deliveries?incident=${loud.id}&channel=email`)).json()) as {
			deliveries: { recipient: string }[];
		};
		expect(rows.deliveries.length).toBe(2);
		// And the silenced incident's alert was never mailed.
		const { messages } = (await (await operator('/api/dev/mail')).json()) as { messages: Mail[] };
		expect(messages.some((m) => m.text?.includes(`/incidents/${quiet.id}`))).toBe(false);
	}, 120_000);
});
