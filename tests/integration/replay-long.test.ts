// A replay of a long run over the real built server: the engine works in a worker and the frames
// are read a page at a time, so another agent's frames are acked and stored meanwhile; the replay
// with unchanged rules still reproduces the live incidents, and a person runs one replay at a time.
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent, type TestAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

const FRAMES = 20_000;
/** The replay page's form as a browser without JavaScript posts it: no field changed, so the rules in force. */
const formPost: RequestInit = {
	method: 'POST',
	body: 'replay=1',
	headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }
};
const PER_MESSAGE = 500;

let seeded: Seeded;
let server: RunningServer;
beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

/** Three lock losses, each longer than the default 5 windows. */
const lockOf = (seq: number) =>
	(seq > 3000 && seq <= 3008) || (seq > 9000 && seq <= 9012) || (seq > 15_500 && seq <= 15_507) ? 0.1 : 0.93;

async function streamLongRun(agent: TestAgent) {
	for (let first = 1; first <= FRAMES; first += PER_MESSAGE) {
		const last = first + PER_MESSAGE - 1;
		agent.send({ type: 'frames', frames: Array.from({ length: PER_MESSAGE }, (_, i) => frame(first + i, lockOf(first + i))) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === last, 60_000);
	}
}

it('replays a 20,000-frame run while another run keeps streaming, and refuses a second replay by the same person', async () => {
	const long = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'long-run', name: 'Long run' });
	await streamLongRun(long);
	long.send({ type: 'end', reason: 'long run done' });
	await new Promise((r) => long.ws.once('close', r));
	const runId = long.welcome.run;

	const observer = await signIn(server, 'observer');
	const unknown = '00000000-0000-4000-8000-000000000000';
	expect((await observer(`/api/runs/${unknown}/replay`, { method: 'POST', body: '{}' })).status).toBe(404);
	expect((await observer(`/api/runs/${unknown}/replay`)).status).toBe(404);
	const live = await (await observer(`/api/incidents?run=${runId}`)).json();
	expect(live.incidents).toHaveLength(3);

	// The second run streams small messages the whole time the replay runs.
	const side = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'side-run', name: 'Side run' });
	let sideSeq = 0;
	let streaming = true;
	const sideLoop = (async () => {
		while (streaming) {
			side.send({ type: 'frames', frames: Array.from({ length: 5 }, () => frame(++sideSeq)) });
			await new Promise((r) => setTimeout(r, 20));
		}
	})();

	const firstDuring = sideSeq + 1;
	const replaying = observer(`/api/runs/${runId}/replay`, { method: 'POST', body: '{}' });

	// While it runs, the person sees its progress and cannot start another.
	let progress: { running: boolean; done: number; total: number } = { running: false, done: 0, total: 0 };
	for (let i = 0; i < 500 && !progress.running; i++) {
		progress = await (await observer(`/api/runs/${runId}/replay`)).json();
		if (!progress.running) await new Promise((r) => setTimeout(r, 10));
	}
	expect(progress.running).toBe(true);
	expect(progress.total).toBe(FRAMES);
	expect(progress.done).toBeLessThanOrEqual(FRAMES);
	const second = await observer(`/api/runs/${runId}/replay`, { method: 'POST', body: '{}' });
	expect(second.status).toBe(409);
	expect((await second.json()).message).toMatch(/replay is already running.*of 20000 frames/);
	// The page's form, posted without JavaScript, says the same.
	const secondByForm = await observer(`/runs/${runId}/replay?/replay`, formPost);
	expect(secondByForm.status).toBe(409);
	expect(await secondByForm.text()).toMatch(/replay is already running/);

	const res = await replaying;
	const lastDuring = sideSeq;
	streaming = false;
	await sideLoop;
	expect(res.status).toBe(200);
	const same = await res.json();

	// Unchanged rules reproduce the live incidents exactly (as in replay.test.ts).
	expect(same.frameCount).toBe(FRAMES);
	expect(same.replayed.map((r: { kind: string; openedSeq: number }) => [r.kind, r.openedSeq])).toEqual([
		['lock_lost', 3005],
		['lock_lost', 9005],
		['lock_lost', 15_505]
	]);
	const byOpen = [...live.incidents].sort((a: { openedSeq: number }, b: { openedSeq: number }) => a.openedSeq - b.openedSeq);
	expect(same.comparison).toEqual({
		both: byOpen.map((inc: { id: string }, k: number) => ({ actualId: inc.id, replayIndex: k, openShift_ms: 0 })),
		onlyReplay: [],
		onlyActual: []
	});

	// Every frame the second run sent while the replay ran was acked and stored.
	expect(lastDuring).toBeGreaterThanOrEqual(firstDuring);
	await side.waitFor((m) => m.type === 'ack' && m.seq === sideSeq, 30_000);
	const stored = await (
		await observer(`/api/runs/${side.welcome.run}/frames?from=${firstDuring}&to=${lastDuring}&limit=${lastDuring - firstDuring + 1}`)
	).json();
	expect(stored.frames.map((f: { seq: number }) => f.seq)).toEqual(
		Array.from({ length: lastDuring - firstDuring + 1 }, (_, i) => firstDuring + i)
	);
	await side.close();

	// Done: the slot is free again, and the page's form (no JavaScript) replays and shows the outcome.
	expect(await (await observer(`/api/runs/${runId}/replay`)).json()).toEqual({ running: false, done: 0, total: FRAMES });
	const byForm = await observer(`/runs/${runId}/replay?/replay`, formPost);
	expect(byForm.status).toBe(200);
	const html = await byForm.text();
	expect(html).toMatch(/Frames replayed/);
	expect(html).toMatch(/Raised by both/);
}, 240_000);
