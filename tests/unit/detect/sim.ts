// Seeded streams for the detector tests: a small PRNG, a Poisson sampler, and a K-state phase
// oscillator that switches as a continuous-time Markov jump process, sampled by evenly spaced shots.
import type { Frame } from '../../../src/lib/protocol/frame';

import { poissonKnuth, uniformStream as rng } from '../../support/random';

/** The shared test generator's uniforms, under the name these tests use. */
export { rng };

export const exponential = (u: () => number, rate: number) => -Math.log(1 - u()) / rate;

export const T0_ms = 1_750_000_000_000;

export type RingOptions = {
	seed: number;
	states: number;
	windows: number;
	window_s?: number;
	shots?: number;
	/** Total switching rate out of a state (per s) in window i (0-based). */
	rate_per_s: (i: number) => number;
	/** aux.mxc_mK of window i, or null for none. */
	T_mK?: (i: number) => number | null;
	/** Out-rate multiplier of each state (default 1: symmetric). */
	stickiness?: number[];
	/** Fraction of switches to a non-neighbour state (default 0). */
	longJumps?: number;
	firstSeq?: number;
	transitions?: boolean;
};

/**
 * Frames of a locked run: each state switches at rate_per_s·stickiness[s], to a neighbour
 * (s ± 1 mod K, equally likely) or, with probability longJumps, to any other state. All time is
 * dwell in phase states (no vacuum). Shots sample the state at evenly spaced instants.
 */
export function ringFrames(o: RingOptions): Frame[] {
	const u = rng(o.seed);
	const K = o.states;
	const window_s = o.window_s ?? 1;
	const shots = o.shots ?? 50;
	const sticky = o.stickiness ?? new Array(K).fill(1);
	let state = Math.floor(u() * K);
	const frames: Frame[] = [];
	for (let i = 0; i < o.windows; i++) {
		const W = o.rate_per_s(i);
		const counts = new Array<number>(K).fill(0);
		const transitions = new Array<number>(K * K).fill(0);
		let t = 0;
		let switches = 0;
		let shot = 0;
		const shotAt = (j: number) => ((j + 0.5) / shots) * window_s;
		for (;;) {
			const rate = W * sticky[state];
			const next = rate > 0 ? t + exponential(u, rate) : Infinity;
			const end = Math.min(next, window_s);
			while (shot < shots && shotAt(shot) < end) {
				counts[state] += 1;
				shot += 1;
			}
			if (next >= window_s) break;
			t = next;
			let to: number;
			if (K === 2) to = 1 - state;
			else if (o.longJumps && u() < o.longJumps && K > 3) to = (state + 2 + Math.floor(u() * (K - 3))) % K;
			else to = (state + (u() < 0.5 ? 1 : K - 1)) % K;
			transitions[state * K + to] += 1;
			switches += 1;
			state = to;
		}
		const T = o.T_mK?.(i) ?? null;
		const seq = (o.firstSeq ?? 1) + i;
		frames.push({
			seq,
			t: T0_ms + seq * window_s * 1000,
			window_s,
			shots,
			vacuum: 0,
			counts,
			lock: 0.95,
			switches,
			dwell_s: window_s,
			escapes: 0,
			vacuum_s: 0,
			...(o.transitions === false ? {} : { transitions }),
			...(T === null ? {} : { aux: { mxc_mK: T } })
		});
	}
	return frames;
}

/** Frames whose switch counts alone are drawn: Poisson(mean(i)) over dwell_s, no occupancy detail. */
export function countFrames(o: {
	seed: number;
	windows: number;
	mean: (i: number) => number;
	T_mK?: (i: number) => number | null;
	K?: number;
	dwell_s?: number;
	firstSeq?: number;
}): Frame[] {
	const u = rng(o.seed);
	const K = o.K ?? 6;
	const frames: Frame[] = [];
	for (let i = 0; i < o.windows; i++) {
		const seq = (o.firstSeq ?? 1) + i;
		const T = o.T_mK?.(i) ?? null;
		frames.push({
			seq,
			t: T0_ms + seq * 1000,
			window_s: 1,
			shots: 60,
			vacuum: 0,
			counts: new Array(K).fill(60 / K),
			lock: 0.95,
			switches: poissonKnuth(o.mean(i), u),
			dwell_s: o.dwell_s ?? 1,
			escapes: 0,
			vacuum_s: 0,
			...(T === null ? {} : { aux: { mxc_mK: T } })
		});
	}
	return frames;
}

/**
 * Frames whose switch and escape counts alone are drawn: Poisson(switchRate(i)·dwell_s) and
 * Poisson(escapeRate(i)·vacuum_s), one window a second, with aux.mxc_mK = T_mK(i) when given.
 */
export function rateFrames(o: {
	seed: number;
	windows: number;
	switchRate: (i: number) => number;
	escapeRate?: (i: number) => number;
	dwell_s?: number;
	vacuum_s?: number;
	T_mK?: (i: number) => number | null;
	firstSeq?: number;
}): Frame[] {
	const u = rng(o.seed);
	const dwell_s = o.dwell_s ?? 1;
	const vacuum_s = o.vacuum_s ?? 0;
	const frames: Frame[] = [];
	for (let i = 0; i < o.windows; i++) {
		const seq = (o.firstSeq ?? 1) + i;
		const T = o.T_mK?.(i) ?? null;
		frames.push({
			seq,
			t: T0_ms + seq * 1000,
			window_s: 1,
			shots: 60,
			vacuum: Math.round(60 * vacuum_s),
			counts: new Array(6).fill((60 - Math.round(60 * vacuum_s)) / 6),
			lock: 0.95,
			switches: poissonKnuth(o.switchRate(i) * dwell_s, u),
			dwell_s,
			escapes: o.escapeRate ? poissonKnuth(o.escapeRate(i) * vacuum_s, u) : 0,
			vacuum_s,
			...(T === null ? {} : { aux: { mxc_mK: T } })
		});
	}
	return frames;
}
