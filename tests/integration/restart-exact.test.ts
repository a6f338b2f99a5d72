// The detector state is saved only every so often; a kill -9 between two saves must still leave
// the detectors exactly where an uninterrupted run of the same frames would be. The server is
// killed while lock_lost's hysteresis and rate_drift's CUSUM are part-way through counting, so a
// restart that lost or double-counted frames would open those incidents at other seqs.
import { afterAll, expect, it } from 'vitest';
import { uniformStream, poissonKnuth } from '../support/random';
import { RUN, frame, startAgent, type TestAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer } from './support/server';
import { EXACT_UNIT_RATE_MODEL } from './support/exact-model';

let server: RunningServer | undefined;
afterAll(async () => {
	await server?.stop();
});

// Snapshots far apart: the only one a run gets is the one taken when its writer opens.
const RARE_SNAPSHOTS = { PHASEWARDEN_SNAPSHOT_S: '3600' };

function script() {
	const u = uniformStream(77);
	return Array.from({ length: 900 }, (_, i) => {
		const seq = i + 1;
		// Lock is lost for windows 298–309: three of the five windows lock_lost needs come before the kill.
		const lock = seq >= 298 && seq <= 309 ? 0.2 : 0.93;
		// The switching rate doubles from 250 on, so the drift CUSUM is mid-way at the kill (after 300).
		const f = { ...frame(seq, lock), dwell_s: 1, switches: poissonKnuth(seq > 250 ? 2 : 1, u) };
		if (seq >= 600 && seq < 700) f.switches = poissonKnuth(1, u);
		return f;
	});
}

async function send(agent: TestAgent, frames: ReturnType<typeof script>) {
	for (let i = 0; i < frames.length; i += 50) agent.send({ type: 'frames', frames: frames.slice(i, i + 50) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === frames.at(-1)!.seq, 30_000);
}

type Listed = { kind: string; key: string; openedSeq: number | null; state: string; summary: string };

it('restores the detectors exactly after a kill -9 between snapshot saves', async () => {
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir, undefined, RARE_SNAPSHOTS);
	const operator = await signIn(server, 'operator');
	// W ≈ W0·e^{−A} = 1 switch per second at 12 mK (n̄ ≈ 2e-9 at 5 GHz).
	// Zero stated uncertainty: the chart counts against the prediction itself, so the scripted drift crosses h.
	const model = EXACT_UNIT_RATE_MODEL;
	expect((await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) })).status).toBe(200);

	const frames = script();
	// The reference: every frame on one connection, no restart.
	const reference = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'uninterrupted' });
	await send(reference, frames);
	await reference.close();

	const interrupted = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'interrupted' });
	await send(interrupted, frames.slice(0, 300));
	await server.kill9();

	server = await startServer(seeded.dataDir, server.port, RARE_SNAPSHOTS);
	const resumed = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'interrupted' });
	expect(resumed.welcome.lastSeq).toBe(300);
	await send(resumed, frames.slice(300));
	await resumed.close();

	const observer = await signIn(server, 'observer');
	const list = async (runId: string): Promise<Listed[]> => {
		const body = await (await observer(`/api/incidents?run=${runId}&sort=openedAt&order=asc`)).json();
		return body.incidents.map((i: Listed) => ({ kind: i.kind, key: i.key, openedSeq: i.openedSeq, state: i.state, summary: i.summary }));
	};
	const expected = await list(reference.welcome.run);
	// The script must exercise what the restart could break: lock lost across the kill, and the drift.
	expect(expected.map((i) => i.kind)).toEqual(expect.arrayContaining(['lock_lost', 'rate_drift']));
	expect(expected.find((i) => i.kind === 'lock_lost')?.openedSeq).toBe(302);
	expect(await list(resumed.welcome.run)).toEqual(expected);
});
