// Replay over the API: the stored frames through a fresh engine. Unchanged rules reproduce the
// live incidents exactly; other rules show what they would have raised; nothing real changes.
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
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

it('reproduces the live incidents with unchanged rules and shows what other rules would raise', async () => {
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'replay-run' });
	// Two lock losses: a long one (8 windows) and a short one (3 windows, below the default 5).
	const lockOf = (seq: number) => ((seq > 10 && seq <= 18) || (seq > 30 && seq <= 33) ? 0.1 : 0.93);
	agent.send({ type: 'frames', frames: Array.from({ length: 45 }, (_, i) => frame(i + 1, lockOf(i + 1))) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 45);
	agent.send({ type: 'end', reason: 'replay test done' });
	await new Promise((r) => agent.ws.once('close', r));

	const observer = await signIn(server, 'observer');
	const runId = agent.welcome.run;
	const before = await (await observer(`/api/incidents?run=${runId}`)).json();
	expect(before.incidents).toHaveLength(1);

	const same = await (await observer(`/api/runs/${runId}/replay`, { method: 'POST', body: '{}' })).json();
	expect(same.frameCount).toBe(45);
	expect(same.replayed).toHaveLength(1);
	expect(same.replayed[0]).toMatchObject({ kind: 'lock_lost', openedSeq: 15, clearedSeq: 23 });
	expect(same.comparison).toEqual({
		both: [{ actualId: before.incidents[0].id, replayIndex: 0, openShift_ms: 0 }],
		onlyReplay: [],
		onlyActual: []
	});

	const { rules } = await (await observer(`/api/setups/${seeded.setupId}/rules`)).json();
	const sensitive = { ...rules, lock_lost: { ...rules.lock_lost, windows: 2 } };
	const other = await (await observer(`/api/runs/${runId}/replay`, { method: 'POST', body: JSON.stringify({ rules: sensitive }) })).json();
	expect(other.replayed.map((r: { openedSeq: number }) => r.openedSeq)).toEqual([12, 32]);
	expect(other.comparison.onlyReplay).toEqual([1]);

	const bad = await observer(`/api/runs/${runId}/replay`, {
		method: 'POST',
		body: JSON.stringify({ rules: { lock_lost: { threshold: -1 } } })
	});
	expect(bad.status).toBe(400);
	expect((await bad.json()).message).toMatch(/lock_lost\.threshold/);

	// Nothing real changed.
	const after = await (await observer(`/api/incidents?run=${runId}`)).json();
	expect(after.incidents).toEqual(before.incidents);
});
