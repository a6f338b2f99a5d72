// Only a seq already stored is a duplicate: a frame that arrives after a higher seq is stored when
// its seq was missing, and the recorded gap shrinks or splits around it.
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

async function storedSeqs(runId: string, to: number) {
	const observer = await signIn(server, 'observer');
	const body = await (await observer(`/api/runs/${runId}/frames?from=1&to=${to}&limit=5000`)).json();
	const detail = await (await observer(`/api/runs/${runId}`)).json();
	return {
		seqs: body.frames.map((f: { seq: number }) => f.seq) as number[],
		run: detail.run,
		gaps: detail.gaps as { fromSeq: number; toSeq: number }[]
	};
}

it('stores a frame that fills a gap after a higher seq (1, 2, 4, then 3)', async () => {
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'late-3' });
	agent.send({ type: 'frames', frames: [frame(1), frame(2), frame(4)] });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 4);
	agent.send({ type: 'frames', frames: [frame(3)] });
	// The ack stays cumulative over what the run has: 4.
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 4 && agent.messages.filter((x) => x.type === 'ack').length >= 2);
	// A true duplicate is acked and not stored twice.
	agent.send({ type: 'frames', frames: [frame(2)] });
	await agent.waitFor(() => agent.messages.filter((x) => x.type === 'ack').length >= 3);
	const { seqs, run, gaps } = await storedSeqs(agent.welcome.run, 10);
	expect(seqs).toEqual([1, 2, 3, 4]);
	expect(run.frameCount).toBe(4);
	expect(gaps).toEqual([]);
	expect(run.gapCount).toBe(0);
	expect(agent.messages.filter((m) => m.type === 'error')).toEqual([]);
	await agent.close();
});

it('keeps frames 11–20 sent after 2147483647, and splits the gap around them', async () => {
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'late-after-max' });
	agent.send({ type: 'frames', frames: Array.from({ length: 10 }, (_, i) => frame(i + 1)) });
	agent.send({ type: 'frames', frames: [{ ...frame(2147483647), t: 1_796_000_100_000 }] });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 2147483647);
	const acks = () => agent.messages.filter((x) => x.type === 'ack').length;
	const before = acks();
	agent.send({ type: 'frames', frames: Array.from({ length: 10 }, (_, i) => frame(i + 11)) });
	await agent.waitFor(() => acks() > before);
	// Another late frame far inside the gap splits it in two.
	agent.send({ type: 'frames', frames: [frame(1000)] });
	await agent.waitFor(() => acks() > before + 1);
	const { seqs, run, gaps } = await storedSeqs(agent.welcome.run, 2147483647);
	expect(seqs).toEqual([...Array.from({ length: 20 }, (_, i) => i + 1), 1000, 2147483647]);
	expect(run.frameCount).toBe(22);
	expect(gaps.map((g) => [g.fromSeq, g.toSeq])).toEqual([
		[21, 999],
		[1001, 2147483646]
	]);
	expect(run.gapCount).toBe(2);

	// After a restart the writer reads the gaps back: a late frame is still recognised as one.
	await server.stop();
	server = await startServer(seeded.dataDir, server.port);
	const again = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'late-after-max' });
	expect(again.welcome.lastSeq).toBe(2147483647);
	again.send({ type: 'frames', frames: [frame(21), frame(5)] });
	await again.waitFor((m) => m.type === 'ack');
	const after = await storedSeqs(again.welcome.run, 2147483647);
	expect(after.run.frameCount).toBe(23);
	expect(after.gaps.map((g) => [g.fromSeq, g.toSeq])).toEqual([
		[22, 999],
		[1001, 2147483646]
	]);
	await again.close();
});
