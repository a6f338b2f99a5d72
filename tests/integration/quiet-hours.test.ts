// Quiet hours over the real server, on the paging clock the test sets: a warning that opens inside
// a person's quiet hours is not sent to them (the colleague without quiet hours gets it, and the
// same warning at noon reaches them too), while a critical one at the same hour is. And when a
// critical joins a warning's group while they sleep, the group's one page reaches them after all —
// once, like everyone else — and the group clears with one notice.
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
	const { incidents } = (await (await admin(`/api/incidents?run=${runId}`)).json()) as {
		incidents: { id: string; kind: string; severity: string }[];
	};
	const incident = incidents.find((i) => i.kind === kind);
	expect(incident, `a ${kind} incident on run ${runId}`).toBeDefined();
	// The deliveries are written in the transaction that opened the incident: all there once it is.
	const { deliveries } = (await (await admin(`/api/deliveries?incident=${incident!.id}&limit=200`)).json()) as { deliveries: Delivery[] };
	return {
		severity: incident!.severity,
		emailedTo: deliveries
			.filter((d) => d.kind === 'alert' && d.channel === 'email')
			.map((d) => d.recipient)
			.sort()
	};
}

describe('quiet hours', () => {
	it('hold back a warning inside them and let a critical through', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, {
			PHASEWARDEN_TEST_HOOKS: '1',
			PHASEWARDEN_TIME_ZONE: 'UTC',
			PHASEWARDEN_ESCALATION_POLL_S: '3600'
		});
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

		const setClock = async (iso: string) =>
			expect(
				(await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: Date.parse(iso) }) })).status
			).toBe(200);

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

	it('let a critical that joins a warning’s group page the sleeper once, and the group clears once', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, {
			PHASEWARDEN_TEST_HOOKS: '1',
			PHASEWARDEN_TIME_ZONE: 'UTC',
			PHASEWARDEN_ESCALATION_POLL_S: '3600'
		});
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');
		const operator = await signIn(server, 'operator');
		const id = async (f: Fetcher) => ((await (await f('/api/auth/get-session')).json()) as { user: { id: string } }).user.id;
		const [adminId, operatorId] = [await id(admin), await id(operator)];
		const op = await signInAs(server, people.operator.email, PASSWORD);
		const prefs = new URLSearchParams([
			['channels', 'email'],
			['severities', 'warning'],
			['quietStart', '22:00'],
			['quietEnd', '07:00'],
			['notifyOnClear', 'on']
		]);
		const saved = await fetch(`${server.url}/settings?/alertPrefs`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: server.url, cookie: op.cookie },
			body: prefs.toString()
		});
		expect(saved.status).toBe(200);
		expect(
			(await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: Date.parse('2026-03-18T03:00:00Z') }) }))
				.status
		).toBe(200);

		// A warm mixing chamber first (warning, heads the group), the lock lost five windows later
		// (critical, joins it: same run within the group window), then lock and temperature return.
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'raised-group' });
		const warm = Array.from({ length: 4 }, (_, i) => ({ ...frame(i + 1), aux: { mxc_mK: 35 } }));
		agent.send({ type: 'frames', frames: warm });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 4);
		const lost = Array.from({ length: 8 }, (_, i) => ({ ...frame(i + 5, 0.15), aux: { mxc_mK: 35 } }));
		agent.send({ type: 'frames', frames: lost });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 12);
		const { incidents } = (await (await admin(`/api/incidents?run=${agent.welcome.run}`)).json()) as {
			incidents: { id: string; kind: string }[];
		};
		const aux = incidents.find((i) => i.kind === 'aux_limit')!;
		const lock = incidents.find((i) => i.kind === 'lock_lost')!;
		expect(aux && lock).toBeTruthy();
		const deliveriesOf = async (incidentId: string) =>
			((await (await admin(`/api/deliveries?incident=${incidentId}&limit=200`)).json()) as { deliveries: Delivery[] }).deliveries.filter(
				(d) => d.channel === 'email'
			);
		// One page per person for the group, on the warning that heads it; the critical queued nothing of its own.
		expect(
			(await deliveriesOf(aux.id))
				.filter((d) => d.kind === 'alert')
				.map((d) => d.recipient)
				.sort()
		).toEqual([adminId, operatorId].sort());
		expect(await deliveriesOf(lock.id)).toEqual([]);
		const detail = (await (await admin(`/api/incidents/${aux.id}`)).json()) as { events: { action: string; note: string | null }[] };
		expect(detail.events.filter((e) => e.action === 'paged').map((e) => e.note)).toEqual([
			expect.stringMatching(/^paged Test (Admin|Operator)(, Test (Admin|Operator))? at /),
			expect.stringMatching(/as critical \(a critical incident joined the group\)$/)
		]);

		const back = Array.from({ length: 10 }, (_, i) => ({ ...frame(i + 13), aux: { mxc_mK: 12 } }));
		agent.send({ type: 'frames', frames: back });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 22);
		await agent.close();
		const states = (
			(await (await admin(`/api/incidents?run=${agent.welcome.run}`)).json()) as { incidents: { state: string }[] }
		).incidents.map((i) => i.state);
		expect(states).toEqual(['resolved', 'resolved']);
		// Cleared once per person, for the group's head; nothing for the member.
		expect(
			(await deliveriesOf(aux.id))
				.filter((d) => d.kind === 'clear')
				.map((d) => d.recipient)
				.sort()
		).toEqual([adminId, operatorId].sort());
		expect(await deliveriesOf(lock.id)).toEqual([]);
	}, 120_000);
});
