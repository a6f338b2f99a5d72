// The rota, grouping and escalation over the real server with the paging clock set by the test hook:
// a lock loss that opens several incidents within seconds pages only the person on call, once;
// unacknowledged, it reaches the secondary after the policy's minutes; acknowledging stops it.
import { afterEach, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { poll } from './support/poll';
import { seedDataDir, signIn, startServer, type RunningServer } from './support/server';
import { EXACT_UNIT_RATE_MODEL } from './support/exact-model';

type Delivery = { id: string; incidentId: string | null; kind: string; channel: string; recipient: string; status: string };
type Incident = { id: string; kind: string; severity: string };

const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

// Wednesday 2026-03-18 12:00 UTC: the second day of the rota's first week (handover Monday 09:00).
const T0 = Date.parse('2026-03-18T12:00:00Z');
const MINUTE = 60_000;

async function userId(fetcher: (p: string, init?: RequestInit) => Promise<Response>): Promise<string> {
	const body = await (await fetcher('/api/auth/get-session')).json();
	return body.user.id;
}

async function alertEmails(server: RunningServer): Promise<Delivery[]> {
	const admin = await signIn(server, 'admin');
	const res = await admin('/api/deliveries?limit=200&channel=email');
	expect(res.status).toBe(200);
	return ((await res.json()).deliveries as Delivery[]).filter((d) => d.kind === 'alert');
}

/** A lock loss with a switching burst and a warm mixing chamber in the same seconds, as in the demo. */
async function demoLikeLockLoss(
	server: RunningServer,
	token: string,
	setupId: string,
	operator: (p: string, init?: RequestInit) => Promise<Response>
) {
	// W = W0·exp(−A/(2n̄+1)) ≈ W0·e^{−A} = 1 switch per second at 5 GHz and 12 mK (see physics-incidents.test.ts).
	const model = EXACT_UNIT_RATE_MODEL;
	expect((await operator(`/api/setups/${setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) })).status).toBe(200);
	const frames = Array.from({ length: 24 }, (_, i) => {
		const seq = i + 1;
		const f: ReturnType<typeof frame> & { aux?: Record<string, number> } = {
			...frame(seq, seq > 10 ? 0.15 : 0.93),
			dwell_s: 1,
			switches: 1
		};
		if (seq === 11) f.switches = 25; // P(K ≥ 25 | μ = 1) ≈ 1e-25: a burst
		if (seq >= 11) f.aux = { mxc_mK: 35 }; // past the default 30 mK limit
		return f;
	});
	const agent = await startAgent(server.wsUrl, token, { ...RUN, key: 'demo-like-lock-loss' });
	for (let i = 0; i < frames.length; i += 4) agent.send({ type: 'frames', frames: frames.slice(i, i + 4) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === frames.length, 30_000);
	await agent.close();
	return agent.welcome.run as string;
}

describe('on call, grouping and escalation', () => {
	it('pages the person on call once for a burst of incidents, escalates to the secondary, stops on acknowledge', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_ESCALATION_POLL_S: '3600' });
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');
		const operator = await signIn(server, 'operator');
		const [adminId, operatorId] = [await userId(admin), await userId(operator)];
		expect((await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 }) })).status).toBe(200);

		for (const id of [adminId, operatorId])
			expect(
				(await admin(`/api/setups/${seeded.setupId}/members`, { method: 'POST', body: JSON.stringify({ userId: id }) })).status
			).toBeLessThan(300);
		const rota = {
			members: [operatorId, adminId],
			handoverWeekday: 1,
			handoverTime: '09:00',
			startsOn: '2026-03-16',
			criticalAckMin: 10,
			warningAckMin: 30
		};
		const saved = await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(rota) });
		expect(saved.status).toBe(200);
		const view = await saved.json();
		expect(view.now).toEqual({ primary: operatorId, secondary: adminId });
		// An observer may read the rota but not change it.
		const observer = await signIn(server, 'observer');
		expect((await observer(`/api/setups/${seeded.setupId}/rota`)).status).toBe(200);
		expect((await observer(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(rota) })).status).toBe(403);

		const runId = await demoLikeLockLoss(server, seeded.token, seeded.setupId, operator);
		const incidents: Incident[] = (await (await operator(`/api/incidents?run=${runId}&sort=openedAt&order=asc`)).json()).incidents;
		expect(incidents.length).toBeGreaterThanOrEqual(3);
		expect(incidents.map((i) => i.kind)).toEqual(expect.arrayContaining(['lock_lost', 'switching_burst', 'aux_limit']));

		// Exactly one page, to the primary on call, for the whole group.
		const first = await poll('the first page', async () => {
			const rows = await alertEmails(server);
			return rows.length > 0 && rows.every((d) => d.status === 'sent') ? rows : null;
		});
		await new Promise((r) => setTimeout(r, 1000));
		const pages = await alertEmails(server);
		expect(pages.map((d) => d.recipient)).toEqual([operatorId]);
		expect(first.map((d) => d.id)).toEqual(pages.map((d) => d.id));
		const head = pages[0].incidentId!;
		const detail = await (await operator(`/api/incidents/${head}`)).json();
		expect(detail.group.map((g: { id: string }) => g.id).sort()).toEqual(incidents.map((i) => i.id).sort());
		expect(detail.events.map((e: { action: string }) => e.action)).toContain('paged');
		const mail = await poll('the e-mail in the catcher', async () => {
			const body = await (await operator('/api/dev/mail')).json();
			const alerts = body.messages.filter((m: { to: string[] }) => m.to.includes('operator@lab.test') || m.to.includes('admin@lab.test'));
			return alerts.length ? alerts : null;
		});
		expect(mail.map((m: { to: string[] }) => m.to[0])).toEqual(['operator@lab.test']);
		// The one page names every incident of the group, including those that opened after the first
		// (it was held for the gathering window, PHASEWARDEN_GROUP_GATHER_S in support/server.ts).
		const text = (mail[0].text as string).replace(/\s+/g, ' ');
		expect(text).toContain('In this alert');
		for (const label of ['Lock lost, critical', 'Switching burst', 'Aux limit, warning']) expect(text).toContain(label);
		expect(mail[0].subject).toMatch(new RegExp(`^\\[Phasewarden\\] Critical: Lock lost and ${incidents.length - 1} related on `));

		// Nine minutes on: nothing new. Ten: the secondary is paged.
		const at9 = await (
			await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 + 9 * MINUTE }) })
		).json();
		expect(at9.paged).toEqual([]);
		const at10 = await (
			await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 + 10 * MINUTE }) })
		).json();
		expect(at10.paged).toEqual([{ incidentId: head, step: 1 }]);
		const escalated = await poll('the page to the secondary', async () => {
			const rows = (await alertEmails(server)).filter((d) => d.recipient === adminId);
			return rows.length ? rows : null;
		});
		expect(escalated.map((d) => d.incidentId)).toEqual([head]);
		const history = (await (await operator(`/api/incidents/${head}`)).json()).events;
		expect(history.find((e: { action: string }) => e.action === 'escalated').note).toMatch(
			/^escalated to Test Admin \(secondary\) at 2026-03-18T12:10:00.000Z$/
		);

		// The operator acknowledges: twenty and thirty minutes on, nobody else is paged.
		expect((await operator(`/api/incidents/${head}/ack`, { method: 'POST', body: '{}' })).status).toBe(200);
		for (const m of [20, 30]) {
			const tick = await (
				await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 + m * MINUTE }) })
			).json();
			expect(tick.paged).toEqual([]);
		}
		await new Promise((r) => setTimeout(r, 500));
		expect((await alertEmails(server)).length).toBe(2);
	}, 120_000);

	it('keeps paging every operator of a setup without a rota, and the timer survives a restart', async () => {
		const seeded = await seedDataDir();
		const env = { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_ESCALATION_POLL_S: '3600' };
		let server = await startServer(seeded.dataDir, undefined, env);
		cleanup.push(() => server.stop());
		let admin = await signIn(server, 'admin');
		await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 }) });
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'no-rota' });
		agent.send({ type: 'frames', frames: Array.from({ length: 22 }, (_, i) => frame(i + 1, i >= 10 ? 0.15 : 0.93)) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 22);
		await agent.close();
		await poll('the first pages', async () => ((await alertEmails(server)).length >= 2 ? true : null));
		// No rota: today's behaviour, every operator and admin at step 0.
		expect(new Set((await alertEmails(server)).map((d) => d.recipient)).size).toBe(2);

		await server.stop();
		server = await startServer(seeded.dataDir, server.port, env);
		admin = await signIn(server, 'admin');
		const tick = await (
			await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 + 10 * MINUTE }) })
		).json();
		expect(tick.paged).toHaveLength(1);
		expect(tick.paged[0].step).toBe(1);
		await poll('the escalated pages', async () => ((await alertEmails(server)).length >= 4 ? true : null));
	}, 120_000);
});

describe('rota page and overrides', () => {
	it('lets an operator add and remove an override; observers read the page without its forms', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_TIME_ZONE: 'Europe/Vienna' });
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');
		const operator = await signIn(server, 'operator');
		const [adminId, operatorId] = [await userId(admin), await userId(operator)];
		await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 }) });
		for (const id of [adminId, operatorId])
			await admin(`/api/setups/${seeded.setupId}/members`, { method: 'POST', body: JSON.stringify({ userId: id }) });
		const rota = { members: [operatorId, adminId], handoverWeekday: 1, handoverTime: '09:00', startsOn: '2026-03-16' };
		expect(
			(
				await operator(`/api/setups/${seeded.setupId}/rota`, {
					method: 'PUT',
					body: JSON.stringify({ ...rota, members: [operatorId, operatorId] })
				})
			).status
		).toBe(400);
		expect(
			(await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify({ ...rota, handoverTime: '9pm' }) }))
				.status
		).toBe(400);
		expect((await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(rota) })).status).toBe(200);

		// "I cover Wednesday night": the admin covers from 20:00 to 08:00 Vienna time (CET, UTC+1).
		const bad = await operator(`/api/setups/${seeded.setupId}/rota/overrides`, {
			method: 'POST',
			body: JSON.stringify({ userId: adminId, from: '2026-03-19T07:00:00Z', until: '2026-03-18T19:00:00Z' })
		});
		expect(bad.status).toBe(400);
		expect((await bad.json()).message).toMatch(/until must be after from/);
		const added = await operator(`/api/setups/${seeded.setupId}/rota/overrides`, {
			method: 'POST',
			body: JSON.stringify({
				userId: adminId,
				from: '2026-03-18T19:00:00Z',
				until: '2026-03-19T07:00:00Z',
				note: 'I cover Wednesday night'
			})
		});
		expect(added.status).toBe(201);
		const { override } = await added.json();
		await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: Date.parse('2026-03-18T23:00:00Z') }) });
		const view = await (await operator(`/api/setups/${seeded.setupId}/rota`)).json();
		expect(view.now).toEqual({ primary: adminId, secondary: operatorId });
		expect(
			view.spans.some((s: { primary: string; from: string }) => s.primary === 'Test Operator' && s.from === '2026-03-19T07:00:00.000Z')
		).toBe(true);

		const observer = await signIn(server, 'observer');
		const page = await observer(`/setups/${seeded.setupId}/oncall`, { headers: { accept: 'text/html' } });
		expect(page.status).toBe(200);
		const html = await page.text();
		expect(html).toContain('Test Admin');
		expect(html).not.toContain('Save rota');
		const opPage = await (await operator(`/setups/${seeded.setupId}/oncall`, { headers: { accept: 'text/html' } })).text();
		expect(opPage).toContain('Save rota');
		expect((await observer(`/api/setups/${seeded.setupId}/rota/overrides/${override.id}`, { method: 'DELETE' })).status).toBe(403);
		expect((await operator(`/api/setups/${seeded.setupId}/rota/overrides/${override.id}`, { method: 'DELETE' })).status).toBe(204);
		expect((await operator(`/api/setups/${seeded.setupId}/rota/overrides/${override.id}`, { method: 'DELETE' })).status).toBe(404);
	}, 120_000);
});
