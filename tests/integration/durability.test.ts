// Frames acked before a kill -9 of the server are all there after a restart on the same data.
import { afterAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer } from './support/server';

let server: RunningServer | undefined;
afterAll(async () => {
	await server?.stop();
});

it('keeps every acked frame through a kill -9 and resumes from the last committed seq', async () => {
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'durable-run' });
	for (let i = 0; i < 6; i++) {
		agent.send({ type: 'frames', frames: Array.from({ length: 50 }, (_, j) => frame(i * 50 + j + 1)) });
	}
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 300);
	// More frames are in flight when the process dies; only the acked ones are promised.
	agent.send({ type: 'frames', frames: Array.from({ length: 50 }, (_, j) => frame(301 + j)) });
	const acked = agent.lastAck();
	await server.kill9();

	server = await startServer(seeded.dataDir, server.port);
	const again = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'durable-run' });
	expect(again.welcome.lastSeq).toBeGreaterThanOrEqual(acked);
	const observer = await signIn(server, 'observer');
	const { frames } = await (await observer(`/api/runs/${again.welcome.run}/frames?from=1&to=${again.welcome.lastSeq}&limit=5000`)).json();
	const seqs: number[] = frames.map((f: { seq: number }) => f.seq);
	expect(seqs.length).toBe(again.welcome.lastSeq);
	expect(seqs).toEqual(Array.from({ length: again.welcome.lastSeq }, (_, i) => i + 1));
	// The run row's progress is written every few seconds, so it lagged at the kill; the new writer
	// recounts it from the stored frames.
	const { run } = await (await observer(`/api/runs/${again.welcome.run}`)).json();
	expect(run.lastSeq).toBe(again.welcome.lastSeq);
	expect(run.frameCount).toBe(seqs.length);
	await again.close();
});
