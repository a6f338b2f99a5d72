// The run API says which detectors can see: without a rate model the rate detectors are not
// watching, a saved model turns them on for the live run, frames without a temperature are noted,
// an ended run says so — from the live engine and, after a restart, from the stored snapshot.
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

type Status = {
	kind: string;
	active: boolean;
	code: string;
	reason: string | null;
	notes: { code: string; text: string }[];
	detail?: Record<string, unknown>;
};

async function statusOf(runId: string): Promise<Record<string, Status>> {
	const observer = await signIn(server, 'observer');
	const res = await observer(`/api/runs/${runId}`);
	expect(res.status).toBe(200);
	const body = (await res.json()) as { detectors: Status[] };
	expect(body.detectors.map((d) => d.kind)).toEqual([
		'lock_lost',
		'agent_silent',
		'switching_burst',
		'rate_drift',
		'occupancy_imbalance',
		'aux_limit'
	]);
	return Object.fromEntries(body.detectors.map((d) => [d.kind, d]));
}

it('reports the rate detectors blind until a rate model is saved, then watching', async () => {
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'status-run' });
	const runId = agent.welcome.run;
	// frame(): 2 switches a window, a temperature of 12.1 mK, no transitions.
	agent.send({ type: 'frames', frames: Array.from({ length: 10 }, (_, i) => frame(i + 1)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 10);

	const before = await statusOf(runId);
	expect(before.switching_burst).toMatchObject({ active: false, code: 'no_rate_model' });
	expect(before.rate_drift).toMatchObject({ active: false, code: 'no_rate_model' });
	expect(before.switching_burst.reason).toMatch(/no rate model/i);
	expect(before.lock_lost).toMatchObject({ active: true, code: 'watching' });
	expect(before.agent_silent.active).toBe(true);
	expect(before.aux_limit).toMatchObject({ active: true, code: 'watching' });
	// 10 windows × 2 switches against the default minimum of 100.
	expect(before.occupancy_imbalance).toMatchObject({
		active: false,
		code: 'too_few_switches',
		detail: { switches: 20, minSwitches: 100, needed: 80 }
	});

	const operator = await signIn(server, 'operator');
	const model = { process: 'switching', W0_per_s: Math.E * 2, A: 2, mode_GHz: 5, nominal_mK: 12, source: 'manual' };
	expect((await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) })).status).toBe(200);

	const after = await statusOf(runId);
	expect(after.switching_burst.active).toBe(true);
	expect(after.rate_drift.active).toBe(true);
	expect(after.switching_burst.notes.map((n) => n.code)).not.toContain('no_temperature');

	// Windows without a temperature: still watching, but the prediction stands at the nominal 12 mK.
	const cold = (seq: number) => {
		const { aux: _aux, ...rest } = frame(seq);
		return rest;
	};
	agent.send({ type: 'frames', frames: Array.from({ length: 5 }, (_, i) => cold(i + 11)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 15);
	const noT = await statusOf(runId);
	expect(noT.switching_burst).toMatchObject({ active: true, code: 'limited' });
	expect(noT.switching_burst.notes.find((n) => n.code === 'no_temperature')?.text).toContain('nominal 12 mK');
	expect(noT.aux_limit).toMatchObject({ active: false, code: 'aux_absent' });

	agent.send({ type: 'end', reason: 'status test done' });
	await new Promise((r) => agent.ws.once('close', r));
	const ended = await statusOf(runId);
	expect(Object.values(ended).every((s) => !s.active && s.code === 'run_ended')).toBe(true);

	// After a restart no writer holds the ended run: the status comes from its stored snapshot.
	await server.stop();
	server = await startServer(seeded.dataDir, server.port);
	const restored = await statusOf(runId);
	expect(Object.values(restored).every((s) => s.code === 'run_ended')).toBe(true);
});

it('pushes the status with the run event after each commit', async () => {
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'status-live' });
	const runId = agent.welcome.run;
	const observer = await signIn(server, 'observer');
	const controller = new AbortController();
	const res = await observer(`/api/runs/${runId}/events`, { signal: controller.signal, headers: { accept: 'text/event-stream' } });
	const reader = res.body!.getReader();
	const decoder = new TextDecoder();
	let text = '';
	const runEvent = (async () => {
		for (;;) {
			const { value, done } = await reader.read();
			if (done) return null;
			text += decoder.decode(value, { stream: true });
			const match = text.split('\n\n').find((block) => block.startsWith('event: run') && block.includes('"detectors"'));
			if (match) return JSON.parse(match.slice(match.indexOf('data: ') + 6)) as { detectors: Status[] };
		}
	})();
	// Wait for the stream to connect before the frame, so its run event is not missed.
	await new Promise((r) => setTimeout(r, 200));
	agent.send({ type: 'frames', frames: [frame(1)] });
	const event = await runEvent;
	controller.abort();
	expect(event?.detectors.map((d) => d.kind)).toContain('switching_burst');
	// The model saved by the first test applies to this run of the same setup.
	expect(event?.detectors.find((d) => d.kind === 'switching_burst')?.active).toBe(true);
	await agent.close();
});
