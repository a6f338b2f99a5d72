// Seeded frames of a junction-type device with 2M phase states that come in pairs: a direct
// continuous-time Markov chain of the phase states (Gillespie), sampled by evenly spaced shots.
// States 2k and 2k+1 share a saddle and switch between each other at `withinRate_per_s`; each
// state also switches to its ring neighbour in the next pair (1↔2, 3↔4, …, K−1↔0) at
// `crossRate_per_s`. The rates are symmetric, so occupancy is uniform (detailed balance with
// π_i = 1/K; so does the optional symmetric jump to the opposite state). `excess` divides every out-rate of state `excessState`, which multiplies its
// stationary occupancy by `excess` relative to each other state (detailed balance again).
import type { Frame } from '../../../src/lib/protocol/frame';
import { exponential, rng, T0_ms } from './sim';

export type PairOptions = {
	seed: number;
	states: number;
	windows: number;
	withinRate_per_s: number;
	crossRate_per_s: number;
	window_s?: number;
	shots?: number;
	excess?: number;
	excessState?: number;
	/** Window index (0-based) from which the excess applies (default 0). */
	excessFrom?: number;
	transitions?: boolean;
	firstSeq?: number;
	/** Extra rate (per s) from each state to the opposite one (s + K/2): a pair the setup does not expect. */
	oppositeRate_per_s?: number;
};

/** The two states a state can switch to: its pair partner, then its neighbour across the pair boundary. */
export function pairTargets(state: number, K: number): [number, number] {
	const partner = state % 2 === 0 ? state + 1 : state - 1;
	const across = state % 2 === 0 ? (state - 1 + K) % K : (state + 1) % K;
	return [partner, across];
}

export function pairFrames(o: PairOptions): Frame[] {
	const K = o.states;
	if (K % 2 !== 0 || K < 4) throw new RangeError(`pairFrames: states must be even and ≥ 4, got ${K}`);
	const u = rng(o.seed);
	const window_s = o.window_s ?? 1;
	const shots = o.shots ?? 2000;
	const shotSpacing_s = window_s / shots;
	const excessState = o.excessState ?? 0;
	let state = Math.floor(u() * K);
	const frames: Frame[] = [];
	// Shots sit at (j + 0.5)·spacing; the number before time t is clamp(ceil(t/spacing − 0.5)).
	const shotsBefore = (t: number) => Math.min(shots, Math.max(0, Math.ceil(t / shotSpacing_s - 0.5)));
	for (let i = 0; i < o.windows; i++) {
		const slow = o.excess !== undefined && i >= (o.excessFrom ?? 0) ? o.excess : 1;
		const counts = new Array<number>(K).fill(0);
		const transitions = new Array<number>(K * K).fill(0);
		let t = 0;
		let switches = 0;
		for (;;) {
			const scale = state === excessState ? 1 / slow : 1;
			const within = o.withinRate_per_s * scale;
			const cross = o.crossRate_per_s * scale;
			const opposite = (o.oppositeRate_per_s ?? 0) * scale;
			const next = t + exponential(u, within + cross + opposite);
			const end = Math.min(next, window_s);
			counts[state] += shotsBefore(end) - shotsBefore(t);
			if (next >= window_s) break;
			const [partner, across] = pairTargets(state, K);
			const x = u() * (within + cross + opposite);
			const to = x < within ? partner : x < within + cross ? across : (state + K / 2) % K;
			transitions[state * K + to] += 1;
			switches += 1;
			state = to;
			t = next;
		}
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
			...(o.transitions === false ? {} : { transitions })
		});
	}
	return frames;
}
