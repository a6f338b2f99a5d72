// Rules per setup over the API: validated by the engine's schema, versioned, recorded with who and
// when, read-only for observers, and applied to the live run's next frames.
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;
beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

it('validates, versions and records rule changes, and applies them to new frames', async () => {
	const observer = await signIn(server, 'observer');
	const operator = await signIn(server, 'operator');
	const url = `/api/setups/${seeded.setupId}/rules`;
	const { rules } = await (await observer(url)).json();
	expect(rules.lock_lost).toMatchObject({ threshold: 0.5, windows: 5, version: 1 });

	expect((await observer(url, { method: 'PUT', body: JSON.stringify(rules) })).status).toBe(403);
	const bad = await operator(url, { method: 'PUT', body: JSON.stringify({ ...rules, lock_lost: { ...rules.lock_lost, threshold: 1.4 } }) });
	expect(bad.status).toBe(400);
	expect((await bad.json()).message).toMatch(/^lock_lost\.threshold/);

	// A live run first, then the change: it must apply from the next frame on.
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'rules-run' });
	agent.send({ type: 'frames', frames: [frame(1), frame(2)] });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 2);
	const changed = { ...rules, lock_lost: { ...rules.lock_lost, windows: 2 } };
	const ok = await operator(url, { method: 'PUT', body: JSON.stringify(changed) });
	expect(ok.status).toBe(200);
	const saved = await ok.json();
	expect(saved.rules.lock_lost).toMatchObject({ windows: 2, version: 2 });
	expect(saved.rules.agent_silent.version).toBe(1);

	const { history } = await (await observer(url)).json();
	expect(history[0]).toMatchObject({ field: 'lock_lost.windows', oldValue: 5, newValue: 2, actorName: people.operator.name });

	agent.send({ type: 'frames', frames: [frame(3, 0.1), frame(4, 0.1)] });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 4);
	const { incidents } = await (await observer(`/api/incidents?run=${agent.welcome.run}`)).json();
	expect(incidents).toHaveLength(1);
	expect(incidents[0]).toMatchObject({ kind: 'lock_lost', openedSeq: 4 });
	expect(incidents[0].evidence).toMatchObject({ rule: 'lock_lost', version: 2 });
	await agent.close();
});
