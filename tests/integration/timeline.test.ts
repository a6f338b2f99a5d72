// The timeline and annotations over the real server: for random spans and N of a stream with gaps
// (in seq and in time), each bucket's sums equal the sums over the stored frames whose t falls in
// it, whichever source (rollups or frames) the server chose; plus annotation roles.
import fc from 'fast-check';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;
let runId: string;
type F = ReturnType<typeof frame>;
const stored: F[] = [];
const T0 = 1_796_000_000_000;

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	// ~3 h of agent time: 1 s windows with seq gaps, pauses of minutes and one of over an hour.
	const [steps] = fc.sample(
		fc.array(
			fc.record({ seqStep: fc.constantFrom(1, 1, 1, 1, 2, 5), dt_ms: fc.oneof(fc.integer({ min: 200, max: 3000 }), fc.constant(400_000)) }),
			{
				minLength: 2500,
				maxLength: 2500
			}
		),
		{ seed: 9, numRuns: 1 }
	);
	let seq = 0;
	let t = T0 + 777;
	for (const [i, s] of steps.entries()) {
		seq += s.seqStep;
		t += i === 1200 ? 4_000_000 : s.dt_ms;
		const f = { ...frame(seq, 0.5 + ((seq * 37) % 50) / 100), t, switches: seq % 7, escapes: seq % 3, aux: { mxc_mK: 10 + (seq % 11) } };
		stored.push(f);
	}
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'timeline-it' });
	for (let i = 0; i < stored.length; i += 250) agent.send({ type: 'frames', frames: stored.slice(i, i + 250) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === seq, 60_000);
	runId = agent.welcome.run;
	await agent.close();
});
afterAll(async () => {
	await server?.stop();
});

type Bucket = {
	from_ms: number;
	to_ms: number;
	frames: number;
	shots: number;
	switches: number;
	escapes: number;
	counts: number[];
	dwell_s: number;
	lock: { min: number; max: number; mean: number } | null;
};

it('sums each bucket exactly over the stored frames in it, at any span and N', async () => {
	const observer = await signIn(server, 'observer');
	const first = stored[0].t;
	const last = stored.at(-1)!.t;
	const cases = fc.sample(
		fc.record({
			a: fc.integer({ min: -60_000, max: last - first }),
			len: fc.integer({ min: 1000, max: last - first + 120_000 }),
			points: fc.integer({ min: 1, max: 3000 })
		}),
		{ seed: 11, numRuns: 25 }
	);
	cases.push({ a: 0, len: last - first + 1, points: 1000 }); // whole run, explicitly
	const sources = new Set<string>();
	for (const c of cases) {
		const from = first + c.a;
		const res = await observer(`/api/runs/${runId}/timeline?from_ms=${from}&to_ms=${from + c.len}&points=${c.points}`).catch((err) => {
			throw new Error(`timeline request failed (${err}); server said:\n${server.output().slice(-3000)}`);
		});
		expect(res.status).toBe(200);
		const body = (await res.json()) as { resolution_s: number; rollup_s: number | null; buckets: Bucket[] };
		sources.add(String(body.rollup_s));
		expect(body.buckets.length).toBeLessThanOrEqual(c.points);
		expect(body.buckets[0].from_ms).toBeLessThanOrEqual(from);
		expect(body.buckets.at(-1)!.to_ms).toBeGreaterThanOrEqual(from + c.len);
		for (const b of body.buckets) {
			const inside = stored.filter((f) => f.t >= b.from_ms && f.t < b.to_ms);
			expect(b.frames).toBe(inside.length);
			expect(b.shots).toBe(inside.reduce((s, f) => s + f.shots, 0));
			expect(b.switches).toBe(inside.reduce((s, f) => s + f.switches, 0));
			expect(b.escapes).toBe(inside.reduce((s, f) => s + f.escapes, 0));
			expect(b.counts[0]).toBe(inside.reduce((s, f) => s + f.counts[0], 0));
			if (inside.length) expect(b.lock!.min).toBe(Math.min(...inside.map((f) => f.lock)));
		}
	}
	// The cases reach both frames and at least one rollup resolution.
	expect(sources.has('null')).toBe(true);
	expect(sources.size).toBeGreaterThan(1);

	const whole = await (await observer(`/api/runs/${runId}/timeline`)).json();
	expect(whole.buckets.reduce((s: number, b: Bucket) => s + b.frames, 0)).toBe(stored.length);
	expect(whole.buckets.length).toBeLessThanOrEqual(1000);
});

it('names a bad parameter', async () => {
	const observer = await signIn(server, 'observer');
	for (const [q, field] of [
		['points=0', 'points'],
		['points=1.5', 'points'],
		['points=20000', 'points'],
		['from_ms=5&to_ms=5', 'to_ms'],
		['from_ms=abc', 'from_ms']
	]) {
		const res = await observer(`/api/runs/${runId}/timeline?${q}`);
		expect(res.status, q).toBe(400);
		expect((await res.json()).message, q).toMatch(new RegExp(`^${field}:`));
	}
	expect((await observer(`/api/runs/nope/timeline`)).status).toBe(404);
	expect((await fetch(`${server.url}/api/runs/${runId}/timeline`)).status).toBe(401);
});

it('lets operators annotate, observers only read, and names a bad field', async () => {
	const observer = await signIn(server, 'observer');
	const operator = await signIn(server, 'operator');
	const path = `/api/runs/${runId}/annotations`;
	const note = { at_ms: T0 + 5000, until_ms: T0 + 65_000, text: 'helium transfer' };
	expect((await observer(path, { method: 'POST', body: JSON.stringify(note) })).status).toBe(403);
	const created = await operator(path, { method: 'POST', body: JSON.stringify(note) });
	expect(created.status).toBe(201);
	const saved = await created.json();
	expect(saved).toMatchObject({ at_ms: note.at_ms, until_ms: note.until_ms, text: note.text, authorName: 'Test Operator' });

	for (const [body, field] of [
		[{ at_ms: T0, text: '' }, 'text'],
		[{ text: 'no time' }, 'at_ms'],
		[{ at_ms: T0, until_ms: T0 - 1, text: 'backwards' }, 'until_ms'],
		[{ at_ms: -3, text: 'negative' }, 'at_ms']
	] as const) {
		const res = await operator(path, { method: 'POST', body: JSON.stringify(body) });
		expect(res.status).toBe(400);
		expect((await res.json()).message).toMatch(new RegExp(`^${field}:`));
	}
	const list = await (await observer(path)).json();
	expect(list.annotations.map((a: { text: string }) => a.text)).toEqual(['helium transfer']);
	// The span query keeps notes that overlap it, drops those that do not.
	expect((await (await observer(`${path}?from_ms=${T0 + 60_000}&to_ms=${T0 + 70_000}`)).json()).annotations).toHaveLength(1);
	expect((await (await observer(`${path}?from_ms=${T0 + 70_000}`)).json()).annotations).toHaveLength(0);

	const admin = await signIn(server, 'admin');
	expect((await admin(`${path}/${saved.id}`, { method: 'DELETE' })).status).toBe(403);
	expect((await operator(`${path}/${saved.id}`, { method: 'DELETE' })).status).toBe(200);
	expect((await (await observer(path)).json()).annotations).toEqual([]);
});
