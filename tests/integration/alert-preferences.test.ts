// Personal alert preferences over the real server: a person who turned every channel off gets no
// alert (critical included: they chose no channel) while the others still do, and a person who
// wants no clear notices gets none when the incident clears itself.
import { afterEach, describe, expect, it } from 'vitest';
import { lockLossRun } from './support/lock-loss';
import { postForm, signInAs } from './support/people';
import { poll } from './support/poll';
import { PASSWORD, people, seedDataDir, signIn, startServer } from './support/server';

const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

type Delivery = { kind: string; channel: string; recipient: string; incidentId: string | null };

describe('alert preferences', () => {
	it('decide which channels carry each person’s alerts and clear notices', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir);
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');

		// The operator: no channels at all. The admin: every channel, but no clear notices.
		const op = await signInAs(server, people.operator.email, PASSWORD);
		const opSaved = await postForm(server, '/settings?/alertPrefs', { severities: 'warning', notifyOnClear: 'on' }, op.cookie);
		expect(opSaved.status).toBe(200);
		const ad = await signInAs(server, people.admin.email, PASSWORD);
		const body = new URLSearchParams([
			['channels', 'email'],
			['channels', 'push'],
			['severities', 'warning'],
			['quietStart', '22:00'],
			['quietEnd', '07:00']
		]);
		const adSaved = await fetch(`${server.url}/settings?/alertPrefs`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: server.url, cookie: ad.cookie },
			body: body.toString()
		});
		expect(adSaved.status).toBe(200);
		// Half a quiet-hours pair is refused with a reason.
		const bad = await postForm(server, '/settings?/alertPrefs', { channels: 'email', quietStart: '22:00' }, ad.cookie);
		expect(bad.status).toBe(400);
		expect(await bad.text()).toMatch(/both ends of the quiet hours/);

		const runId = await lockLossRun(server.wsUrl, seeded.token, 'prefs', { recover: true });
		const { incidents } = (await (await admin(`/api/incidents?run=${runId}`)).json()) as {
			incidents: { id: string; kind: string; state: string }[];
		};
		const lock = incidents.find((i) => i.kind === 'lock_lost')!;
		await poll('the lock-loss incident cleared', async () => {
			const { incident } = (await (await admin(`/api/incidents/${lock.id}`)).json()) as { incident: { state: string } };
			return incident.state === 'resolved';
		});
		const { deliveries } = (await (await admin(`/api/deliveries?incident=${lock.id}&limit=200`)).json()) as { deliveries: Delivery[] };
		// Critical goes through the admin's quiet hours (whatever the hour now), on e-mail only: no devices registered.
		expect(deliveries.filter((d) => d.kind === 'alert').map((d) => d.channel)).toEqual(['email']);
		const mails = await poll('the admin’s alert e-mail', async () => {
			const { messages } = (await (await admin('/api/dev/mail')).json()) as { messages: { to: string[]; text?: string }[] };
			const about = messages.filter((m) => m.text?.includes(`/incidents/${lock.id}`));
			return about.length ? about : null;
		});
		expect(mails.map((m) => m.to[0])).toEqual([people.admin.email]);
		// Nobody asked for the clear notice: the operator has no channel, the admin turned them off.
		expect(deliveries.filter((d) => d.kind === 'clear')).toEqual([]);
	}, 120_000);
});
