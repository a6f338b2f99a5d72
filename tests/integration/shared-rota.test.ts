// A group of setups on one rota, over the real server: a second fridge follows the first one's
// rota, so its lock loss pages only the person on call on the shared rota (without the rota every
// operator would be paged); it is edited on its owner's page only, and refused to people who could
// not be on call for every setup of the group.
import { afterEach, describe, expect, it } from 'vitest';
import { lockLossRun } from './support/lock-loss';
import { postForm, signInAs } from './support/people';
import { PASSWORD, people, seedDataDir, signIn, startServer } from './support/server';

const cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
	while (cleanup.length) await cleanup.pop()!().catch(() => {});
});

const T0 = Date.parse('2026-03-18T12:00:00Z'); // a Wednesday, in the rota's first week (handover Monday 09:00)
type Delivery = { kind: string; channel: string; recipient: string; incidentId: string | null };

describe('a rota shared by a group of setups', () => {
	it('pages the shared rota’s person on call for a setup that follows it', async () => {
		const seeded = await seedDataDir();
		const server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_ESCALATION_POLL_S: '3600' });
		cleanup.push(() => server.stop());
		const admin = await signIn(server, 'admin');
		const operator = await signIn(server, 'operator');
		const id = async (f: typeof admin) => ((await (await f('/api/auth/get-session')).json()) as { user: { id: string } }).user.id;
		const [adminId, operatorId] = [await id(admin), await id(operator)];
		expect((await admin('/api/dev/escalations/clock', { method: 'POST', body: JSON.stringify({ now_ms: T0 }) })).status).toBe(200);

		const created = await operator('/api/setups', {
			method: 'POST',
			body: JSON.stringify({ name: 'Second fridge · doubler', order: 2, states: 2, mode_GHz: 6.8, nominal_mK: 15 })
		});
		expect(created.status).toBe(201);
		const second: string = (await created.json()).setup.id;
		const { secret } = await (
			await operator(`/api/setups/${second}/tokens`, { method: 'POST', body: JSON.stringify({ label: 'second PC' }) })
		).json();
		for (const setupId of [seeded.setupId, second])
			for (const userId of [adminId, operatorId])
				expect((await admin(`/api/setups/${setupId}/members`, { method: 'POST', body: JSON.stringify({ userId }) })).status).toBeLessThan(
					300
				);
		const rota = { members: [operatorId, adminId], handoverWeekday: 1, handoverTime: '09:00', startsOn: '2026-03-16' };
		expect((await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(rota) })).status).toBe(200);

		const op = await signInAs(server, people.operator.email, PASSWORD);
		// Refused with a reason: following itself, following a setup with no rota.
		const self = await postForm(server, `/setups/${second}/oncall?/followRota`, { rotaSetupId: second }, op.cookie);
		expect(self.status).toBe(400);
		expect(await self.text()).toMatch(/cannot follow its own rota/);
		const follows = await postForm(server, `/setups/${second}/oncall?/followRota`, { rotaSetupId: seeded.setupId }, op.cookie);
		expect(follows.status).toBe(200);
		const observer = await signIn(server, 'observer');
		const view = await (await observer(`/api/setups/${second}/rota`)).json();
		expect(view.now).toEqual({ primary: operatorId, secondary: adminId });
		expect(view.sharedFrom.id).toBe(seeded.setupId);
		expect((await (await observer(`/api/setups/${seeded.setupId}/rota`)).json()).followers.map((f: { id: string }) => f.id)).toEqual([
			second
		]);
		// The rota is edited where it lives; the follower's own rota and overrides are refused.
		const own = await operator(`/api/setups/${second}/rota`, { method: 'PUT', body: JSON.stringify(rota) });
		expect(own.status).toBe(400);
		expect((await own.json()).message).toMatch(/follows the rota of Test fridge/);
		const page = await (await operator(`/setups/${second}/oncall`, { headers: { accept: 'text/html' } })).text();
		expect(page).toContain('covered by the rota and escalation policy of');
		expect(page).not.toContain('Save rota');

		// The second fridge loses lock: one page, to the shared rota's primary only.
		const runId = await lockLossRun(server.wsUrl, secret, 'shared-rota');
		const { incidents } = (await (await operator(`/api/incidents?run=${runId}`)).json()) as { incidents: { id: string; kind: string }[] };
		const lock = incidents.find((i) => i.kind === 'lock_lost')!;
		const { deliveries } = (await (await admin(`/api/deliveries?incident=${lock.id}&limit=200`)).json()) as { deliveries: Delivery[] };
		expect(deliveries.filter((d) => d.kind === 'alert' && d.channel === 'email').map((d) => d.recipient)).toEqual([operatorId]);

		// A person who is not a member of the follower cannot join the shared rota.
		expect((await admin(`/api/setups/${second}/members/${adminId}`, { method: 'DELETE' })).status).toBeLessThan(300);
		const widened = await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(rota) });
		expect(widened.status).toBe(400);
		expect((await widened.json()).message).toMatch(/Test Admin cannot be on call for Second fridge/);

		// Stopping: the second fridge is back to paging every operator (no rota of its own).
		expect((await postForm(server, `/setups/${second}/oncall?/stopFollowing`, {}, op.cookie)).status).toBe(200);
		expect((await (await observer(`/api/setups/${second}/rota`)).json()).now).toEqual({ primary: null, secondary: null });

		// The same through the JSON API: observers are refused, the same checks name their reason,
		// and following and stopping answer with the follower's rota.
		const follow = (f: typeof admin, body: unknown) =>
			f(`/api/setups/${second}/rota/follow`, { method: 'PUT', body: JSON.stringify(body) });
		expect((await follow(observer, { rotaSetupId: seeded.setupId })).status).toBe(403);
		const blank = await follow(operator, {});
		expect(blank.status).toBe(400);
		expect((await blank.json()).message).toMatch(/^rotaSetupId/);
		const itself = await follow(operator, { rotaSetupId: second });
		expect(itself.status).toBe(400);
		expect((await itself.json()).message).toMatch(/cannot follow its own rota/);
		const notOnCallable = await follow(operator, { rotaSetupId: seeded.setupId });
		expect(notOnCallable.status).toBe(400);
		expect((await notOnCallable.json()).message).toMatch(/Test Admin .* cannot be on call here/);
		const narrower = { ...rota, members: [operatorId] };
		expect((await operator(`/api/setups/${seeded.setupId}/rota`, { method: 'PUT', body: JSON.stringify(narrower) })).status).toBe(200);
		const followed = await follow(operator, { rotaSetupId: seeded.setupId });
		expect(followed.status).toBe(200);
		expect(await followed.json()).toMatchObject({ sharedFrom: { id: seeded.setupId }, now: { primary: operatorId } });
		expect((await observer(`/api/setups/${second}/rota/follow`, { method: 'DELETE' })).status).toBe(403);
		const stopped = await operator(`/api/setups/${second}/rota/follow`, { method: 'DELETE' });
		expect(stopped.status).toBe(200);
		expect((await stopped.json()).now).toEqual({ primary: null, secondary: null });
		expect((await operator(`/api/setups/${second}/rota/follow`, { method: 'DELETE' })).status).toBe(404);
	}, 120_000);
});
