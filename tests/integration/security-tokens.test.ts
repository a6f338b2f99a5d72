// Revoking an agent token closes its open socket at once: the server closes it before answering the
// DELETE, so no frame sent after the revocation is stored.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

describe('revoking an agent token', () => {
	it('closes its live socket with 4001 and refuses the reconnect', async () => {
		const operator = await signIn(server, 'operator');
		const created = await operator(`/api/setups/${seeded.setupId}/tokens`, {
			method: 'POST',
			body: JSON.stringify({ label: 'to revoke' })
		});
		expect(created.status).toBe(201);
		const { token, secret } = (await created.json()) as { token: { id: string }; secret: string };

		const agent = await startAgent(server.wsUrl, secret, { key: 'revoke-run', name: 'Revoke', order: 3, states: 6, mode_GHz: 5 });
		agent.send({ type: 'frames', frames: [frame(1), frame(2)] });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 2);
		const closed = new Promise<number>((resolve) => agent.ws.once('close', (code) => resolve(code)));

		const revoked = await operator(`/api/setups/${seeded.setupId}/tokens/${token.id}`, { method: 'DELETE' });
		expect(revoked.status).toBe(200);
		// The close frame is already on its way when the DELETE answers; whatever the agent sends now is not taken.
		agent.send({ type: 'frames', frames: [frame(3), frame(4)] });
		expect(await closed).toBe(4001);

		const res = await operator(`/api/runs/${agent.welcome.run}/frames?from=1&to=100`);
		expect(((await res.json()).frames as { seq: number }[]).map((f) => f.seq)).toEqual([1, 2]);
		await expect(startAgent(server.wsUrl, secret)).rejects.toThrow(/HTTP 401/);
	});
});
