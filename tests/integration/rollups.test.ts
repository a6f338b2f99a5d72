// Rollups over the real server equal a brute-force aggregation of the frames it stored, for random
// streams: gaps in seq, re-sent frames, gap frames arriving after higher seqs, random batch sizes,
// bucket edges crossed and hit to the half millisecond, aux and transitions present or not.
// The aggregation below is written independently of src/lib/rollup (only the bucketing rule —
// floor(round(t)/width)·width on agent ms — is shared, as the definition of a bucket).
import fc from 'fast-check';
import type { Frame } from '../../src/lib/protocol/frame';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

const K = 6; // the seeded setup: order 3, states 6
const RESOLUTIONS_S = [10, 60, 600, 3600];
const NOMINAL_mK = 12; // the seeded setup's nominal temperature
const MODE_GHz = 5;
// CODATA 2018 recommended values, exact in the SI since the 2019 redefinition (NIST CODATA 2018).
const PLANCK_J_s = 6.62607015e-34;
const BOLTZMANN_J_per_K = 1.380649e-23;

let seeded: Seeded;
let server: RunningServer;
beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

type WireFrame = Frame;

const positive = (max: number) => fc.double({ min: 1e-3, max, noNaN: true });
const nonNegative = (max: number) => fc.oneof(fc.constant(0), positive(max));

const frameBody = fc.record({
	seqStep: fc.oneof({ arbitrary: fc.constant(1), weight: 4 }, { arbitrary: fc.integer({ min: 2, max: 6 }), weight: 1 }),
	// Mostly seconds apart; now and then a pause of up to two hours, so 600 s and 3600 s edges are crossed too.
	dt_ms: fc.oneof(
		{ arbitrary: fc.double({ min: 50, max: 25_000, noNaN: true }), weight: 12 },
		{ arbitrary: fc.double({ min: 25_000, max: 7_200_000, noNaN: true }), weight: 1 }
	),
	// Snap onto a 10 s edge (every coarser edge is one too), to the half ms either side.
	snap_ms: fc.oneof({ arbitrary: fc.constant(null), weight: 3 }, { arbitrary: fc.constantFrom(-0.5, -0.49, 0, 0.49, 0.5), weight: 1 }),
	window_s: positive(30),
	counts: fc.array(fc.integer({ min: 0, max: 400 }), { minLength: K, maxLength: K }),
	vacuum: fc.integer({ min: 0, max: 100 }),
	spareShots: fc.integer({ min: 0, max: 50 }),
	lock: fc.double({ min: 0, max: 1, noNaN: true }).filter((x) => x === 0 || x >= 1e-6),
	switches: fc.integer({ min: 0, max: 20 }),
	dwell_s: nonNegative(30),
	escapes: fc.integer({ min: 0, max: 5 }),
	vacuum_s: nonNegative(2),
	transitions: fc.option(fc.array(fc.integer({ min: 0, max: 5 }), { minLength: K * K, maxLength: K * K }), { freq: 2 }),
	mxc_mK: fc.option(fc.double({ min: 8, max: 150, noNaN: true }), { freq: 3 }),
	pump_uW: fc.option(positive(5), { freq: 2 }),
	// How this frame is delivered.
	late: fc.integer({ min: 0, max: 99 }).map((n) => n < 15),
	resends: fc.oneof({ arbitrary: fc.constant(0), weight: 4 }, { arbitrary: fc.integer({ min: 1, max: 2 }), weight: 1 }),
	resendAfter: fc.nat({ max: 30 })
});

const stream = fc.record({
	firstSeq: fc.integer({ min: 1, max: 50 }),
	t0_ms: fc.integer({ min: 0, max: 3_600_000 }).map((o) => 1_796_000_000_000 + o),
	frames: fc.array(frameBody, { minLength: 20, maxLength: 150, size: 'medium' }),
	batchSizes: fc.array(fc.integer({ min: 1, max: 25 }), { minLength: 1, maxLength: 8 })
});
type Stream = typeof stream extends fc.Arbitrary<infer S> ? S : never;

/** The distinct frames, in seq order, and the messages that deliver them (duplicates included). */
function plan(s: Stream): { distinct: WireFrame[]; messages: WireFrame[][] } {
	let seq = s.firstSeq - 1;
	let t = s.t0_ms;
	const distinct: WireFrame[] = s.frames.map((b) => {
		seq += b.seqStep;
		t += b.dt_ms;
		if (b.snap_ms !== null) t = Math.ceil(t / 10_000) * 10_000 + b.snap_ms;
		const aux: Record<string, number> = {};
		if (b.mxc_mK !== null) aux.mxc_mK = b.mxc_mK;
		if (b.pump_uW !== null) aux.pump_uW = b.pump_uW;
		const f: WireFrame = {
			seq,
			t,
			window_s: b.window_s,
			shots: b.counts.reduce((a, c) => a + c, 0) + b.vacuum + b.spareShots,
			vacuum: b.vacuum,
			counts: b.counts,
			lock: b.lock,
			switches: b.switches,
			dwell_s: b.dwell_s,
			escapes: b.escapes,
			vacuum_s: b.vacuum_s
		};
		if (b.transitions) f.transitions = b.transitions;
		if (Object.keys(aux).length) f.aux = aux;
		return f;
	});
	// On time first, then the held-back gap frames (newest first, so each arrives after higher seqs).
	const order: WireFrame[] = [...distinct.filter((_, i) => !s.frames[i].late), ...distinct.filter((_, i) => s.frames[i].late).reverse()];
	// Re-sends go in after the frame's first delivery.
	distinct.forEach((f, i) => {
		for (let r = 0; r < s.frames[i].resends; r++) {
			const first = order.indexOf(f);
			order.splice(Math.min(order.length, first + 1 + s.frames[i].resendAfter), 0, { ...f });
		}
	});
	// A fresh highest seq delivered last: once it is stored, every message before it was handled.
	const last = distinct[distinct.length - 1];
	const barrier: WireFrame = { ...last, seq: last.seq + 1, t: last.t + 1000 };
	distinct.push(barrier);
	const messages: WireFrame[][] = [];
	for (let i = 0, b = 0; i < order.length; b++) {
		const size = s.batchSizes[b % s.batchSizes.length];
		messages.push(order.slice(i, i + size));
		i += size;
	}
	messages.push([barrier]);
	return { distinct, messages };
}

type AuxAgg = { min: number; max: number; sum: number; n: number };
type Bucket = {
	bucket_t: number;
	frames: number;
	firstSeq: number;
	lastSeq: number;
	shots: number;
	vacuum: number;
	counts: number[];
	switches: number;
	escapes: number;
	transitions: number[] | null;
	window_s: number;
	dwell_s: number;
	vacuum_s: number;
	lockMin: number;
	lockSum: number;
	lockMax: number;
	aux: Record<string, AuxAgg>;
	expectedSwitches: number | null;
	expectedEscapes: number | null;
};

type SwitchingModel = { W0_per_s: number; A: number };

/** Bose–Einstein occupation n̄ = 1/(exp(hf/kT) − 1) of the f = 5 GHz mode at T (mK). */
function occupation(T_mK: number): number {
	return 1 / (Math.exp((PLANCK_J_s * MODE_GHz * 1e9) / (BOLTZMANN_J_per_K * T_mK * 1e-3)) - 1);
}

/** Groups stored frames by floor(round(t)/width)·width and adds them up field by field. */
function bruteForce(stored: WireFrame[], resolution_s: number, model: SwitchingModel | null): Bucket[] {
	const width = resolution_s * 1000;
	const buckets = new Map<number, Bucket>();
	for (const f of stored) {
		const bucket_t = Math.floor(Math.round(f.t) / width) * width;
		let b = buckets.get(bucket_t);
		if (!b) {
			b = {
				bucket_t,
				frames: 0,
				firstSeq: Infinity,
				lastSeq: -Infinity,
				shots: 0,
				vacuum: 0,
				counts: new Array(K).fill(0),
				switches: 0,
				escapes: 0,
				transitions: null,
				window_s: 0,
				dwell_s: 0,
				vacuum_s: 0,
				lockMin: Infinity,
				lockSum: 0,
				lockMax: -Infinity,
				aux: {},
				expectedSwitches: null,
				expectedEscapes: null
			};
			buckets.set(bucket_t, b);
		}
		b.frames++;
		b.firstSeq = Math.min(b.firstSeq, f.seq);
		b.lastSeq = Math.max(b.lastSeq, f.seq);
		b.shots += f.shots;
		b.vacuum += f.vacuum;
		f.counts.forEach((c, i) => (b.counts[i] += c));
		b.switches += f.switches;
		b.escapes += f.escapes;
		if (f.transitions) {
			const sum = b.transitions ?? new Array(K * K).fill(0);
			f.transitions.forEach((c, i) => (sum[i] += c));
			b.transitions = sum;
		}
		b.window_s += f.window_s;
		b.dwell_s += f.dwell_s;
		b.vacuum_s += f.vacuum_s;
		b.lockMin = Math.min(b.lockMin, f.lock);
		b.lockSum += f.lock;
		b.lockMax = Math.max(b.lockMax, f.lock);
		for (const [name, v] of Object.entries(f.aux ?? {})) {
			const a = (b.aux[name] ??= { min: Infinity, max: -Infinity, sum: 0, n: 0 });
			a.min = Math.min(a.min, v);
			a.max = Math.max(a.max, v);
			a.sum += v;
			a.n++;
		}
		if (model) {
			const T_mK = f.aux?.mxc_mK ?? NOMINAL_mK;
			const rate_per_s = model.W0_per_s * Math.exp(-model.A / (2 * occupation(T_mK) + 1));
			b.expectedSwitches = (b.expectedSwitches ?? 0) + rate_per_s * f.dwell_s;
		}
	}
	return [...buckets.values()].sort((a, b) => a.bucket_t - b.bucket_t);
}

/** Float sums of non-negative terms: equal to a relative 1e-9 (summation order may differ). */
function closeTo(actual: number | null, expected: number | null, what: string) {
	if (expected === null || actual === null) return expect(actual, what).toBe(expected);
	const tolerance = 1e-9 * Math.max(Math.abs(actual), Math.abs(expected));
	expect(Math.abs(actual - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(tolerance);
}

function compare(actual: Bucket[], expected: Bucket[], resolution_s: number) {
	expect(
		actual.map((r) => r.bucket_t),
		`${resolution_s} s buckets`
	).toEqual(expected.map((r) => r.bucket_t));
	actual.forEach((a, i) => {
		const e = expected[i];
		const at = `${resolution_s} s bucket ${e.bucket_t}`;
		const exact = [
			'frames',
			'firstSeq',
			'lastSeq',
			'shots',
			'vacuum',
			'counts',
			'switches',
			'escapes',
			'transitions',
			'lockMin',
			'lockMax'
		] as const;
		for (const key of exact) expect(a[key], `${at} ${key}`).toEqual(e[key]);
		for (const key of ['window_s', 'dwell_s', 'vacuum_s', 'lockSum', 'expectedSwitches'] as const) closeTo(a[key], e[key], `${at} ${key}`);
		expect(a.expectedEscapes, `${at} expectedEscapes (no escape model)`).toBeNull();
		expect(Object.keys(a.aux).sort(), `${at} aux names`).toEqual(Object.keys(e.aux).sort());
		for (const [name, agg] of Object.entries(e.aux)) {
			expect({ ...a.aux[name], sum: 0 }, `${at} aux ${name}`).toEqual({ ...agg, sum: 0 });
			closeTo(a.aux[name].sum, agg.sum, `${at} aux ${name} sum`);
		}
	});
}

type Api = Awaited<ReturnType<typeof signIn>>;

async function getJson(api: Api, path: string) {
	const res = await api(path);
	if (!res.ok) throw new Error(`GET ${path}: ${res.status} ${await res.text()}`);
	return res.json();
}

async function storedFrames(api: Api, runId: string, lastSeq: number): Promise<WireFrame[]> {
	const out: WireFrame[] = [];
	for (let from = 1; from <= lastSeq;) {
		const { frames } = await getJson(api, `/api/runs/${runId}/frames?from=${from}&to=${lastSeq}&limit=5000`);
		if (frames.length === 0) break;
		out.push(...frames);
		from = frames[frames.length - 1].seq + 1;
	}
	return out;
}

async function storedRollups(api: Api, runId: string, resolution_s: number): Promise<Bucket[]> {
	const out: Bucket[] = [];
	let from = 0;
	for (;;) {
		const body = await getJson(api, `/api/runs/${runId}/rollups?resolution=${resolution_s}&from=${from}`);
		expect(body.resolution_s).toBe(resolution_s);
		for (const r of body.rollups) expect(r.resolution_s).toBe(resolution_s);
		out.push(...body.rollups);
		if (!body.truncated) return out;
		from = body.rollups[body.rollups.length - 1].bucket_t + resolution_s * 1000;
	}
}

async function deliverAndCompare(s: Stream, runKey: string, model: SwitchingModel | null) {
	const { distinct, messages } = plan(s);
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: runKey });
	try {
		for (const frames of messages) agent.send({ type: 'frames', frames });
		const observer = await signIn(server, 'observer');
		const runId = agent.welcome.run;
		await expect
			.poll(
				async () => {
					const errors = agent.messages.filter((m) => m.type === 'error');
					if (errors.length) throw new Error(`the server refused frames: ${JSON.stringify(errors)}`);
					return (await getJson(observer, `/api/runs/${runId}`)).run.frameCount;
				},
				{ timeout: 30_000, interval: 100 }
			)
			.toBe(distinct.length);
		expect(agent.messages.filter((m) => m.type === 'error')).toEqual([]);

		const stored = await storedFrames(observer, runId, distinct[distinct.length - 1].seq);
		expect(stored.map((f) => f.seq)).toEqual(distinct.map((f) => f.seq));
		for (const resolution_s of RESOLUTIONS_S) {
			compare(await storedRollups(observer, runId, resolution_s), bruteForce(stored, resolution_s, model), resolution_s);
		}
	} catch (e) {
		// A writer that fails sends the agent nothing: the server's log is where the cause is.
		console.error(`server output (tail):\n${server.output().slice(-4000)}`);
		throw e;
	} finally {
		await agent.close();
	}
}

let runNo = 0;

it('stores rollups equal to an independent aggregation of the stored frames (no rate model)', async () => {
	await fc.assert(
		fc.asyncProperty(stream, (s) => deliverAndCompare(s, `rollup-prop-${++runNo}`, null)),
		{ numRuns: 4, endOnFailure: true }
	);
});

it('answers 400 naming the field for a bad resolution or range, and 404 for an unknown run', async () => {
	const observer = await signIn(server, 'observer');
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'rollup-errors' });
	const runId = agent.welcome.run;
	await agent.close();
	for (const bad of ['', '?resolution=30', '?resolution=ten', `?resolution=10&from=-1`, '?resolution=60&from=20&to=10']) {
		const res = await observer(`/api/runs/${runId}/rollups${bad}`);
		expect(res.status, bad).toBe(400);
		const field = bad.includes('from') ? 'from' : 'resolution';
		expect(JSON.stringify(await res.json()), bad).toContain(field);
	}
	expect((await observer(`/api/runs/no-such-run/rollups?resolution=10`)).status).toBe(404);
	const empty = await (await observer(`/api/runs/${runId}/rollups?resolution=3600`)).json();
	expect(empty).toEqual({ resolution_s: 3600, rollups: [], truncated: false });
	expect((await fetch(`${server.url}/api/runs/${runId}/rollups?resolution=10`)).status).toBe(401);
});

it('sums the switching model W0·exp(−A/(2n̄+1))·dwell_s into expectedSwitches, at each window’s temperature', async () => {
	const operator = await signIn(server, 'operator');
	const model = { W0_per_s: 50, A: 4 };
	const body = { process: 'switching', ...model, mode_GHz: MODE_GHz, nominal_mK: NOMINAL_mK, source: 'manual' };
	expect((await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(body) })).status).toBe(200);
	// At 5 GHz, hf/k ≈ 240 mK: between 8 and 150 mK n̄ runs from ~1e-13 to ~0.25, so a wrong
	// temperature (or the nominal one standing in for a measured one) moves the sum well past 1e-9.
	const [s] = fc.sample(stream, { seed: 20261202, numRuns: 1 });
	await deliverAndCompare(s, 'rollup-model', model);
});

it('keeps to the [from, to] range, taking the bucket under way at from', async () => {
	const t0_ms = 1_796_400_000_000; // a whole 3600 s bucket
	const total = 400;
	const frames = Array.from({ length: total }, (_, i) => ({ ...frame(i + 1, 0.9, t0_ms), t: t0_ms + i * 10_000 + 1 }));
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'rollup-range' });
	for (let i = 0; i < total; i += 200) agent.send({ type: 'frames', frames: frames.slice(i, i + 200) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === total, 30_000);
	await agent.close();
	const observer = await signIn(server, 'observer');
	const base = `/api/runs/${agent.welcome.run}/rollups`;

	const tens = await getJson(observer, `${base}?resolution=10`);
	expect(tens.truncated).toBe(false);
	expect(tens.rollups.map((r: Bucket) => r.bucket_t)).toEqual(Array.from({ length: total }, (_, i) => t0_ms + i * 10_000));
	const window = await getJson(observer, `${base}?resolution=60&from=${t0_ms + 61_000}&to=${t0_ms + 180_000}`);
	expect(window.rollups.map((r: Bucket) => [r.bucket_t, r.frames, r.firstSeq])).toEqual([
		[t0_ms + 60_000, 6, 7],
		[t0_ms + 120_000, 6, 13],
		[t0_ms + 180_000, 6, 19]
	]);
	// 400 frames 10 s apart: 360 in the first hour, 40 in the second.
	const hours = await getJson(observer, `${base}?resolution=3600`);
	expect(hours.rollups.map((r: Bucket) => r.frames)).toEqual([360, 40]);
});

it('returns at most 5000 rows from `from` on and says when more exist (500-frame messages, one bucket per frame)', async () => {
	const t0_ms = 1_796_400_000_000;
	const total = 5003;
	const frames = Array.from({ length: total }, (_, i) => ({ ...frame(i + 1, 0.9, t0_ms), t: t0_ms + i * 10_000 + 1 }));
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'rollup-many' });
	for (let i = 0; i < total; i += 500) agent.send({ type: 'frames', frames: frames.slice(i, i + 500) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === total, 50_000);
	await agent.close();
	const observer = await signIn(server, 'observer');
	const base = `/api/runs/${agent.welcome.run}/rollups`;

	const first = await getJson(observer, `${base}?resolution=10`);
	expect(first.truncated).toBe(true);
	expect(first.rollups.map((r: Bucket) => r.bucket_t)).toEqual(Array.from({ length: 5000 }, (_, i) => t0_ms + i * 10_000));
	const rest = await getJson(observer, `${base}?resolution=10&from=${t0_ms + 5000 * 10_000}`);
	expect(rest.truncated).toBe(false);
	expect(rest.rollups.map((r: Bucket) => r.firstSeq)).toEqual([5001, 5002, 5003]);
}, 60_000);
