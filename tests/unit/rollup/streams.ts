// Random frame streams for the rollup tests, and the oracle they are checked against: a plain
// aggregation written apart from the module (loop over the frames of each resolution, group by
// floor(t / resolution)), so a shared mistake would have to be made twice.
import fc from 'fast-check';
import { expect } from 'vitest';
import type { Frame } from '../../../src/lib/protocol/frame';
import type { Rollup } from '../../../src/lib/rollup/rollup';

export const AUX_POOL = ['mxc_mK', 'pump_dBm', 'bias_uV', 'still_K'] as const;
/** 2024-01-01T00:00:00Z: an hour boundary, so the 3600 s buckets line up with the clock too. */
export const T0_MS = 1_704_067_200_000;

export type Expected = { switches: number | null; escapes: number | null } | null;
export type Stream = { states: number; frames: Frame[]; expected: Map<number, Expected> };

/** Doubles without −0, whose sign min/max and storage may keep or drop. */
const real = (min: number, max: number) => fc.double({ min, max, noNaN: true }).map((v) => v + 0);

const expectedArb: fc.Arbitrary<Expected> = fc.oneof(
	fc.constant(null),
	fc.record({
		switches: fc.option(real(0, 50), { nil: null }),
		escapes: fc.option(real(0, 5), { nil: null })
	})
);

const frameArb = (states: number) =>
	fc.record({
		seqGap: fc.integer({ min: 1, max: 4 }),
		// Mostly seconds apart, sometimes minutes or more than an hour: every bucket size gets crossed.
		dt_ms: fc.oneof(
			fc.integer({ min: 0, max: 4_000 }),
			fc.integer({ min: 4_000, max: 700_000 }),
			fc.integer({ min: 3_000_000, max: 8_000_000 })
		),
		window_s: real(0.01, 10),
		counts: fc.array(fc.integer({ min: 0, max: 400 }), { minLength: states, maxLength: states }),
		vacuum: fc.integer({ min: 0, max: 100 }),
		spare: fc.integer({ min: 0, max: 50 }),
		lock: real(0, 1),
		switches: fc.integer({ min: 0, max: 30 }),
		dwell_s: real(0, 10),
		escapes: fc.integer({ min: 0, max: 5 }),
		vacuum_s: real(0, 10),
		transitions: fc.option(fc.array(fc.integer({ min: 0, max: 9 }), { minLength: states * states, maxLength: states * states }), {
			nil: undefined
		}),
		aux: fc.option(fc.dictionary(fc.constantFrom(...AUX_POOL), real(-1e3, 1e3), { maxKeys: AUX_POOL.length, noNullPrototype: true }), {
			nil: undefined
		}),
		expected: expectedArb
	});

export const streamArb = (maxFrames = 60): fc.Arbitrary<Stream> =>
	fc.integer({ min: 2, max: 6 }).chain((states) =>
		fc.array(frameArb(states), { minLength: 1, maxLength: maxFrames }).map((raw) => {
			let seq = 0;
			let t = T0_MS - 5_000;
			const frames: Frame[] = [];
			const expected = new Map<number, Expected>();
			for (const r of raw) {
				seq += r.seqGap;
				t += r.dt_ms;
				const inStates = r.counts.reduce((a, b) => a + b, 0);
				const frame: Frame = {
					seq,
					t,
					window_s: r.window_s,
					shots: inStates + r.vacuum + r.spare,
					vacuum: r.vacuum,
					counts: r.counts,
					lock: r.lock,
					switches: r.switches,
					dwell_s: r.dwell_s,
					escapes: r.escapes,
					vacuum_s: r.vacuum_s
				};
				if (r.transitions) frame.transitions = r.transitions;
				if (r.aux) frame.aux = r.aux;
				frames.push(frame);
				expected.set(seq, r.expected);
			}
			return { states, frames, expected };
		})
	);

/** Splits `items` at the given cut points (any numbers; taken modulo the length + 1). */
export function splitAt<T>(items: T[], cuts: number[]): T[][] {
	const points = [...new Set(cuts.map((c) => c % (items.length + 1)))].sort((a, b) => a - b);
	const out: T[][] = [];
	let from = 0;
	for (const p of [...points, items.length]) {
		if (p > from) out.push(items.slice(from, p));
		from = Math.max(from, p);
	}
	return out;
}

/** Fisher–Yates driven by fast-check's numbers, so a failing order shrinks and replays. */
export function permute<T>(items: T[], keys: number[]): T[] {
	const out = [...items];
	for (let i = out.length - 1; i > 0; i--) {
		const j = (keys[i % Math.max(1, keys.length)] ?? 0) % (i + 1);
		[out[i], out[j]] = [out[j], out[i]];
	}
	return out;
}

/** The stored shape; the brute force below fills it independently of rollup.ts. */
export type Agg = Rollup;

/**
 * The oracle: every bucket of every resolution, keyed `${resolution_s}:${bucket_t}`. t is rounded
 * to whole ms first because that is what the frames table keeps.
 */
export function bruteForce(frames: Frame[], expectedOf: (f: Frame) => Expected, resolutions: readonly number[]): Map<string, Agg> {
	const out = new Map<string, Agg>();
	for (const res of resolutions) {
		for (const f of frames) {
			const index = Math.floor(Math.round(f.t) / (res * 1000));
			const key = `${res}:${index * res * 1000}`;
			let a = out.get(key);
			if (!a) {
				a = {
					resolution_s: res,
					bucket_t: index * res * 1000,
					frames: 0,
					firstSeq: Infinity,
					lastSeq: -Infinity,
					window_s: 0,
					shots: 0,
					vacuum: 0,
					counts: f.counts.map(() => 0),
					switches: 0,
					dwell_s: 0,
					escapes: 0,
					vacuum_s: 0,
					transitions: null,
					lockMin: Infinity,
					lockSum: 0,
					lockMax: -Infinity,
					aux: {},
					expectedSwitches: null,
					expectedEscapes: null
				};
				out.set(key, a);
			}
			a.frames += 1;
			if (f.seq < a.firstSeq) a.firstSeq = f.seq;
			if (f.seq > a.lastSeq) a.lastSeq = f.seq;
			a.window_s += f.window_s;
			a.shots += f.shots;
			a.vacuum += f.vacuum;
			for (let i = 0; i < f.counts.length; i++) a.counts[i] += f.counts[i];
			a.switches += f.switches;
			a.dwell_s += f.dwell_s;
			a.escapes += f.escapes;
			a.vacuum_s += f.vacuum_s;
			if (f.transitions) {
				if (!a.transitions) a.transitions = f.transitions.map(() => 0);
				for (let i = 0; i < f.transitions.length; i++) a.transitions[i] += f.transitions[i];
			}
			if (f.lock < a.lockMin) a.lockMin = f.lock;
			if (f.lock > a.lockMax) a.lockMax = f.lock;
			a.lockSum += f.lock;
			for (const name of Object.keys(f.aux ?? {})) {
				const v = f.aux![name];
				const s = a.aux[name] ?? { min: Infinity, max: -Infinity, sum: 0, n: 0 };
				s.min = Math.min(s.min, v);
				s.max = Math.max(s.max, v);
				s.sum += v;
				s.n += 1;
				a.aux[name] = s;
			}
			const e = expectedOf(f);
			if (e && e.switches !== null) a.expectedSwitches = (a.expectedSwitches ?? 0) + e.switches;
			if (e && e.escapes !== null) a.expectedEscapes = (a.expectedEscapes ?? 0) + e.escapes;
		}
	}
	return out;
}

/** Float sums depend on the order of addition: equal within a relative 1e-9. */
function expectClose(actual: number | null, wanted: number | null, what: string) {
	if (wanted === null || actual === null) {
		expect(actual, what).toBe(wanted);
		return;
	}
	const scale = Math.max(1, Math.abs(wanted));
	expect(Math.abs(actual - wanted) / scale, `${what}: ${actual} vs ${wanted}`).toBeLessThanOrEqual(1e-9);
}

/** Integer fields and min/max exactly, float sums within a relative 1e-9. */
export function expectSameRollups(actual: Agg[], wanted: Map<string, Agg>) {
	const byKey = new Map(actual.map((r) => [`${r.resolution_s}:${r.bucket_t}`, r]));
	expect(actual.length, 'one rollup per key').toBe(byKey.size);
	expect([...byKey.keys()].sort()).toEqual([...wanted.keys()].sort());
	for (const [key, w] of wanted) {
		const a = byKey.get(key)!;
		for (const field of ['frames', 'firstSeq', 'lastSeq', 'shots', 'vacuum', 'switches', 'escapes', 'lockMin', 'lockMax'] as const) {
			expect(a[field], `${key} ${field}`).toBe(w[field]);
		}
		expect(a.counts, `${key} counts`).toEqual(w.counts);
		expect(a.transitions, `${key} transitions`).toEqual(w.transitions);
		for (const field of ['window_s', 'dwell_s', 'vacuum_s', 'lockSum', 'expectedSwitches', 'expectedEscapes'] as const) {
			expectClose(a[field], w[field], `${key} ${field}`);
		}
		expect(Object.keys(a.aux).sort(), `${key} aux names`).toEqual(Object.keys(w.aux).sort());
		for (const [name, s] of Object.entries(w.aux)) {
			expect(a.aux[name].min, `${key} aux.${name}.min`).toBe(s.min);
			expect(a.aux[name].max, `${key} aux.${name}.max`).toBe(s.max);
			expect(a.aux[name].n, `${key} aux.${name}.n`).toBe(s.n);
			expectClose(a.aux[name].sum, s.sum, `${key} aux.${name}.sum`);
		}
	}
}
