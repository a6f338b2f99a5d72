// The whole loop over the real production server, a real WebSocket, PGlite on disk and the SMTP
// catcher: lock loss → incident → e-mail → acknowledge, with the role rules enforced by the server.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RUN, connect, frame, startAgent } from './support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';
import { poll } from './support/poll';

let seeded: Seeded;
let server: RunningServer;

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

describe('agent stream authentication', () => {
	it('refuses a missing or unknown token with HTTP 401 before the upgrade', async () => {
		await expect(connect(server.wsUrl, null)).rejects.toThrow('HTTP 401');
		await expect(connect(server.wsUrl, 'pwa_not-a-real-token')).rejects.toThrow('HTTP 401');
	});

	it('refuses a revoked token', async () => {
		const operator = await signIn(server, 'operator');
		const created = await operator(`/api/setups/${seeded.setupId}/tokens`, {
			method: 'POST',
			body: JSON.stringify({ label: 'to revoke' })
		});
		expect(created.status).toBe(201);
		const { token, secret } = await created.json();
		const ws = await connect(server.wsUrl, secret);
		ws.close();
		const revoked = await operator(`/api/setups/${seeded.setupId}/tokens/${token.id}`, { method: 'DELETE' });
		expect(revoked.status).toBe(200);
		await expect(connect(server.wsUrl, secret)).rejects.toThrow('HTTP 401');
	});
});

describe('lock loss end to end', () => {
	it('opens one incident, e-mails the operators, and resolves itself when lock returns', async () => {
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'lock-loss-run' });
		expect(agent.welcome.lastSeq).toBe(0);
		// 10 locked windows, 12 with lock lost (threshold 0.5, 5 windows), then 10 locked again.
		const lockOf = (seq: number) => (seq > 10 && seq <= 22 ? 0.15 : 0.93);
		const all = Array.from({ length: 32 }, (_, i) => frame(i + 1, lockOf(i + 1)));
		for (let i = 0; i < all.length; i += 4) agent.send({ type: 'frames', frames: all.slice(i, i + 4) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 32);
		const runId = agent.welcome.run;

		const observer = await signIn(server, 'observer');
		const incidents = await poll('the incident to resolve itself', async () => {
			const body = await (await observer(`/api/incidents?run=${runId}`)).json();
			return body.incidents.length === 1 && body.incidents[0].state === 'resolved' ? body.incidents : null;
		});
		const [incident] = incidents;
		expect(incident).toMatchObject({ kind: 'lock_lost', severity: 'critical', runId, openedSeq: 15 });
		expect(incident.evidence.rule).toBe('lock_lost');

		const history = await (await observer(`/api/incidents/${incident.id}`)).json();
		expect(history.events.map((e: { action: string }) => e.action)).toEqual(['opened', 'paged', 'auto_resolved']);

		const operator = await signIn(server, 'operator');
		const mail = await poll('the alert e-mail', async () => {
			const body = await (await operator('/api/dev/mail')).json();
			return body.messages.find((m: { to: string[] }) => m.to.includes(people.operator.email));
		});
		expect(mail.subject).toMatch(/lock/i);
		expect(mail.text).toContain('Test fridge · tripler');
		expect(mail.text).toContain(`/incidents/${incident.id}`);
		// Alerts go to operators and admins, never to observers.
		expect(mail.to).not.toContain(people.observer.email);
		await agent.close();
	});

	it('lets an operator acknowledge and resolve, and answers 403 to an observer', async () => {
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'ack-run' });
		agent.send({ type: 'frames', frames: Array.from({ length: 8 }, (_, i) => frame(i + 1, 0.1)) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 8);
		const observer = await signIn(server, 'observer');
		const operator = await signIn(server, 'operator');
		const open = await poll('an open incident', async () => {
			const body = await (await observer(`/api/incidents?state=open&run=${agent.welcome.run}`)).json();
			return body.incidents[0];
		});
		const denied = await observer(`/api/incidents/${open.id}/ack`, { method: 'POST', body: '{}' });
		expect(denied.status).toBe(403);
		const tooLong = await operator(`/api/incidents/${open.id}/ack`, { method: 'POST', body: JSON.stringify({ note: 'x'.repeat(2001) }) });
		expect(tooLong.status).toBe(400);
		expect((await tooLong.json()).message).toMatch(/note/);
		const acked = await operator(`/api/incidents/${open.id}/ack`, {
			method: 'POST',
			body: JSON.stringify({ note: 'pump relocked by hand' })
		});
		expect(acked.status).toBe(200);
		expect((await acked.json()).incident.state).toBe('acknowledged');
		const resolved = await operator(`/api/incidents/${open.id}/resolve`, { method: 'POST', body: '{}' });
		expect((await resolved.json()).incident.state).toBe('resolved');
		const again = await operator(`/api/incidents/${open.id}/resolve`, { method: 'POST', body: '{}' });
		expect(again.status).toBe(409);
		const history = await (await observer(`/api/incidents/${open.id}`)).json();
		expect(history.events.map((e: { action: string; actorName: string | null }) => [e.action, e.actorName])).toEqual([
			['opened', null],
			// The first page is part of the history ("paged … at …").
			['paged', null],
			['acknowledged', people.operator.name],
			['resolved', people.operator.name]
		]);
		await agent.close();
	});
});

describe('frame validation', () => {
	it('names the bad field, stores nothing of the bad frame, and keeps the good ones', async () => {
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'validation-run' });
		const bad = { ...frame(2), lock: 1.7 };
		const wrongStates = { ...frame(3), counts: [1, 2, 3] };
		agent.send({ type: 'frames', frames: [frame(1), bad, wrongStates] });
		const err = await agent.waitFor((m) => m.type === 'error' && m.seq === 2);
		expect(err).toMatchObject({ code: 'invalid_frame' });
		expect((err as { message: string }).message).toMatch(/frames\[1\]\.lock/);
		const err3 = await agent.waitFor((m) => m.type === 'error' && m.seq === 3);
		expect((err3 as { message: string }).message).toMatch(/counts.*6/);
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 1);
		agent.ws.send('{not json');
		expect(await agent.waitFor((m) => m.type === 'error' && m.code === 'invalid_json')).toBeTruthy();
		const observer = await signIn(server, 'observer');
		const body = await (await observer(`/api/runs/${agent.welcome.run}/frames`)).json();
		expect(body.frames.map((f: { seq: number }) => f.seq)).toEqual([1]);
		await agent.close();
	});
});

describe('resume after reconnect', () => {
	it('welcomes with lastSeq and stores each seq exactly once, marking a gap', async () => {
		const key = 'resume-run';
		const first = await startAgent(server.wsUrl, seeded.token, { ...RUN, key });
		first.send({ type: 'frames', frames: Array.from({ length: 20 }, (_, i) => frame(i + 1)) });
		await first.waitFor((m) => m.type === 'ack' && m.seq === 20);
		first.ws.terminate();

		const second = await startAgent(server.wsUrl, seeded.token, { ...RUN, key });
		expect(second.welcome.lastSeq).toBe(20);
		expect(second.welcome.run).toBe(first.welcome.run);
		// The agent resends an overlap (as after a lost ack) and then new frames, skipping 26..27.
		const resend = [...Array.from({ length: 10 }, (_, i) => frame(16 + i)), frame(28), frame(29)];
		second.send({ type: 'frames', frames: resend });
		await second.waitFor((m) => m.type === 'ack' && m.seq === 29);
		const observer = await signIn(server, 'observer');
		const { frames } = await (await observer(`/api/runs/${first.welcome.run}/frames?from=1&to=100`)).json();
		const seqs = frames.map((f: { seq: number }) => f.seq);
		expect(seqs).toEqual([...Array.from({ length: 25 }, (_, i) => i + 1), 28, 29]);
		const run = await (await observer(`/api/runs/${first.welcome.run}`)).json();
		expect(run.gaps).toEqual([expect.objectContaining({ fromSeq: 26, toSeq: 27 })]);
		expect(run.run.frameCount).toBe(27);
		await second.close();
	});
});

describe('API rules', () => {
	it('answers 401 signed out, 403 for the wrong role, 400 naming the field, 404 for unknown ids', async () => {
		expect((await fetch(`${server.url}/api/setups`)).status).toBe(401);
		const observer = await signIn(server, 'observer');
		const operator = await signIn(server, 'operator');
		const forbidden = await observer('/api/setups', {
			method: 'POST',
			body: JSON.stringify({ name: 'x', order: 3, states: 6, mode_GHz: 5, nominal_mK: 10 })
		});
		expect(forbidden.status).toBe(403);
		const bad = await operator('/api/setups', {
			method: 'POST',
			body: JSON.stringify({ name: 'x', order: 3, states: 5, mode_GHz: 5, nominal_mK: 10 })
		});
		expect(bad.status).toBe(400);
		expect((await bad.json()).message).toMatch(/^states/);
		const badQuery = await observer('/api/incidents?state=sleeping');
		expect(badQuery.status).toBe(400);
		expect((await badQuery.json()).message).toMatch(/^state/);
		expect((await observer('/api/runs/00000000-0000-0000-0000-000000000000')).status).toBe(404);
		expect((await operator('/api/incidents/nope/ack', { method: 'POST', body: '{}' })).status).toBe(404);
		expect((await operator('/api/users')).status).toBe(403);
	});
});
