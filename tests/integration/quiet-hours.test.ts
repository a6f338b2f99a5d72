// Quiet hours over the real server, on the paging clock the test sets: a warning that opens inside
// a person's quiet hours is not sent to them (the colleague without quiet hours gets it, and the
// same warning at noon reaches them too), while a critical one at the same hour is.
import { afterEach, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { lockLossRun } from './support/lock-loss';
import { signInAs } from './support/people';
import { PASSWORD, people, seedDataDir, signIn, startServer, type RunningServer } from './support/server';

const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

type Delivery = { kind: string; channel: string; recipient: string; incidentId: string | null };
type Fetcher = Awaited<ReturnType<typeof signIn>>;

/** A warm mixing chamber on a locked run: the aux_limit rule's default (mxc_mK above 30 for 3 windows) opens a warning. */
async function warmRun(server: RunningServer, token: string, key: string) {
	const agent = await startAgent(server.wsUrl, token, { ...RUN, key });
	const frames = Array.from({ length: 8 }, (_, i) => ({ ...frame(i + 1), ...(i >= 2 ? { aux: { mxc_mK: 35 } } : {}) }));
	agent.send({ type: 'frames', frames });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === frames.length);
	await agent.close();
	return agent.welcome.run as string;
}

async function alertRecipientsOf(admin: Fetcher, runId: string, kind: string) {
	const { incidents } = (await (await admin(`/api/incidents?run=${runId}`)).json()) as { incidents: { id: string; kind: string; severity: string }[] };
	const incident = incidents.find((i) => i.kind === kind);
	expect(incident, `a ${kind} incident on run ${runId}`).toBeDefined();
	// The deliveries are written in the transaction that opened the incident: all there once it is.
	const { deliveries } = (await (await admin(`/api/deliveries?incident=${incident!.id}&limit=200`)).json()) as { deliveries: Delivery[] };
	return { severity: incident!.severity, emailedTo: deliveries.filter((d) => d.kind === 'alert' && d.channel === 'email').map((d) => d.recipient).sort() };
}

describe('quiet hours', () => {
	it('hold back a warning inside them and let a critical through', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_TIME_ZONE: 'UTC', PHASEWARDEN_ESCALATION_POLL_S: '3600' });
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');
		const operator = await signIn(server, 'operator');
		const id = async (f: Fetcher) => ((await (await f('/api/auth/get-session')).json()) as { user: { id: string } }).user.id;
		const [adminId, operatorId] = [await id(admin), await id(operator)];

		// The operator: e-mail for warnings too, but quiet from 22:00 to 07:00 (UTC, the lab's zone here).
		const op = await signInAs(server, people.operator.email, PASSWORD);
		const prefs = new URLSearchParams([
			['channels', 'email'],
			['severities', 'warning'],
			['severities', 'info'],
			['quietStart', '22:00'],
			['quietEnd', '07:00']
		]);
		const saved = await fetch(`${server.url}/settings?/alertPrefs`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: server.url, cookie: op.cookie },
			body: prefs.toString()
		});
		expect(saved.status).toBe(200);

		const setClock = async (iso: string) => expect((await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: Date.parse(iso) }) })).status).toBe(200);

		// 03:00, inside the quiet hours: the warning reaches the admin only.
		await setClock('2026-03-18T03:00:00Z');
		const night = await alertRecipientsOf(admin, await warmRun(server, seeded.token, 'quiet-night'), 'aux_limit');
		expect(night.severity).toBe('warning');
		expect(night.emailedTo).toEqual([adminId]);

		// 03:00, a lost lock: critical goes through the quiet hours.
		const lock = await alertRecipientsOf(admin, await lockLossRun(server.wsUrl, seeded.token, 'quiet-lock'), 'lock_lost');
		expect(lock.severity).toBe('critical');
		expect(lock.emailedTo).toEqual([adminId, operatorId].sort());

		// Noon, outside them: the same warning reaches the operator as well.
		await setClock('2026-03-18T12:00:00Z');
		const day = await alertRecipientsOf(admin, await warmRun(server, seeded.token, 'quiet-day'), 'aux_limit');
		expect(day.emailedTo).toEqual([adminId, operatorId].sort());
	}, 120_000);
});
