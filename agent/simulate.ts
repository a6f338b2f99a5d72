// A plausible run of a locked period-M oscillator with K phase states that loses its lock for a
// while and recovers. Pure (no clock, no I/O): the CLI supplies the start time and the pacing.
//
// Model (deliberately simple; the physics issue replaces it): a continuous-time Markov chain over
// the vacuum state and the K phase states, run exactly (Gillespie) through each window. Phase states
// switch at a base rate, mostly to a neighbour (k ± 1); they decay to vacuum now and then and escape
// back quickly, so the vacuum fraction is small. Shots sample the chain at evenly spaced instants, so
// counts, dwell times, switches, escapes and the transition matrix of one frame agree with each other.
// While the lock is lost the phase diffuses: fast switching spreads the counts over all states, the
// phase noise grows (lock ≈ 0.2), the vacuum fraction rises and a bias jump shows in aux.
import type { Frame } from '../src/lib/protocol/index.ts';
import { createRng } from '../src/lib/physics/random.ts';

export interface SimulatorOptions {
	seed: number;
	/** Unix time in ms at which the simulated run starts (frame t is the end of each window). */
	startMs: number;
	/** First seq to emit (a resumed run continues after the server's lastSeq). */
	startSeq?: number;
	window_s?: number;
	order?: number;
	states?: number;
	shots?: number;
	/** Simulated minute at which the lock is lost. */
	loseLockAtMin?: number;
	/** How long the lock stays lost, in minutes (0: never lost). */
	lockLossMin?: number;
	/** Switching rate between phase states while locked, per second. */
	switchRate_per_s?: number;
	/** Add an IQ histogram of this many bins a side to every frame (0: none). */
	iqBins?: number;
}

export interface Simulator {
	/** The next window's frame; simulated time advances by window_s. */
	next(): Frame;
	/** Simulated seconds since the start, at the end of the last emitted window. */
	readonly elapsed_s: number;
	/** Whether the window centred at `elapsed_s` is inside the lock-loss interval. */
	isLockLost(elapsed_s: number): boolean;
}

interface Regime {
	switch_per_s: number;
	decay_per_s: number;
	escape_per_s: number;
	/** Phase noise of shots in phase states, rad. */
	sigma_rad: number;
	/** Relative spread of sigma from window to window. */
	sigmaSpread: number;
	/** Amplitude of the oscillating states, √photons. */
	amp: number;
	bias_uV: number;
}

const VACUUM = -1;
/** exp(−K²σ²/2) = 0.93 for K = 6: the locked phase noise (common practice: Gaussian phase noise). */
const LOCKED_SIGMA_RAD = 0.0635;
const LOST_SIGMA_RAD = 0.3;
const NEIGHBOUR_FRACTION = 0.8;
const MXC_BASE_mK = 12;
const MXC_TAU_s = 600;
const MXC_SD_mK = 0.15;

function positive(name: string, value: number): number {
	if (!(Number.isFinite(value) && value > 0)) throw new RangeError(`simulator: ${name} must be a positive number, got ${value}`);
	return value;
}

function nonNegative(name: string, value: number): number {
	if (!(Number.isFinite(value) && value >= 0)) throw new RangeError(`simulator: ${name} must be ≥ 0, got ${value}`);
	return value;
}

export function createSimulator(options: SimulatorOptions): Simulator {
	const window_s = positive('window_s', options.window_s ?? 1);
	const order = options.order ?? 3;
	const states = options.states ?? 2 * order;
	if (!Number.isInteger(order) || order < 2) throw new RangeError(`simulator: order must be an integer ≥ 2, got ${order}`);
	if (states !== order && states !== 2 * order) {
		throw new RangeError(`simulator: states must be order (${order}) or twice the order (${2 * order}), got ${states}`);
	}
	const shots = options.shots ?? 2000;
	if (!Number.isInteger(shots) || shots < 1) throw new RangeError(`simulator: shots must be an integer ≥ 1, got ${shots}`);
	const lossStart_s = nonNegative('loseLockAtMin', options.loseLockAtMin ?? 1) * 60;
	const lossEnd_s = lossStart_s + nonNegative('lockLossMin', options.lockLossMin ?? 1.5) * 60;
	const switchRate = nonNegative('switchRate_per_s', options.switchRate_per_s ?? 0.05);
	const iqBins = options.iqBins ?? 0;
	if (!Number.isInteger(iqBins) || iqBins < 0 || iqBins > 64)
		throw new RangeError(`simulator: iqBins must be an integer 0…64, got ${iqBins}`);
	let seq = options.startSeq ?? 1;
	if (!Number.isInteger(seq) || seq < 1) throw new RangeError(`simulator: startSeq must be an integer ≥ 1, got ${seq}`);

	const locked: Regime = {
		switch_per_s: switchRate,
		decay_per_s: 0.3,
		escape_per_s: 20,
		sigma_rad: LOCKED_SIGMA_RAD * Math.sqrt(36 / (states * states)),
		sigmaSpread: 0.15,
		amp: 4,
		bias_uV: 18
	};
	const lost: Regime = {
		switch_per_s: 30,
		decay_per_s: 4,
		escape_per_s: 20,
		sigma_rad: LOST_SIGMA_RAD * Math.sqrt(36 / (states * states)),
		sigmaSpread: 0.1,
		amp: 3,
		bias_uV: 18.8
	};

	const rng = createRng(options.seed);
	let state = rng.nextInt(states);
	let elapsed_s = 0;
	let mxc_mK = MXC_BASE_mK + MXC_SD_mK * rng.nextGaussian();

	const isLockLost = (t_s: number) => t_s >= lossStart_s && t_s < lossEnd_s;

	function otherState(from: number): number {
		const neighbour = rng.nextFloat() < 0.5 ? 1 : states - 1;
		if (states <= 3 || rng.nextFloat() < NEIGHBOUR_FRACTION) return (from + neighbour) % states;
		// A longer jump: any state that is neither itself nor a neighbour.
		return (from + 2 + rng.nextInt(states - 3)) % states;
	}

	function next(): Frame {
		const regime = isLockLost(elapsed_s + window_s / 2) ? lost : locked;
		// Gillespie through the window: segments of constant state.
		const starts: number[] = [0];
		const segStates: number[] = [state];
		const transitions = new Array<number>(states * states).fill(0);
		let switches = 0;
		let escapes = 0;
		let t = 0;
		for (;;) {
			const outRate = state === VACUUM ? regime.escape_per_s : regime.switch_per_s + regime.decay_per_s;
			if (outRate <= 0) break;
			t += rng.nextExponential(outRate);
			if (t >= window_s) break;
			if (state === VACUUM) {
				state = rng.nextInt(states);
				escapes += 1;
			} else if (rng.nextFloat() * outRate < regime.switch_per_s) {
				const to = otherState(state);
				transitions[state * states + to] += 1;
				switches += 1;
				state = to;
			} else {
				state = VACUUM;
			}
			starts.push(t);
			segStates.push(state);
		}
		let dwell_s = 0;
		for (let i = 0; i < starts.length; i++) {
			const end = i + 1 < starts.length ? starts[i + 1] : window_s;
			if (segStates[i] !== VACUUM) dwell_s += end - starts[i];
		}

		const counts = new Array<number>(states).fill(0);
		const iq = iqBins > 0 ? new Array<number>(iqBins * iqBins).fill(0) : null;
		const extent = regime === lost ? locked.amp * 1.5 : regime.amp * 1.5;
		const sigma = Math.max(0, regime.sigma_rad * (1 + regime.sigmaSpread * rng.nextGaussian()));
		let vacuum = 0;
		let re = 0;
		let im = 0;
		let seg = 0;
		for (let j = 0; j < shots; j++) {
			const at = ((j + 0.5) / shots) * window_s;
			while (seg + 1 < starts.length && starts[seg + 1] <= at) seg++;
			const s = segStates[seg];
			let x: number;
			let y: number;
			if (s === VACUUM) {
				vacuum += 1;
				x = 0.5 * rng.nextGaussian();
				y = 0.5 * rng.nextGaussian();
			} else {
				counts[s] += 1;
				const delta = sigma * rng.nextGaussian();
				re += Math.cos(states * delta);
				im += Math.sin(states * delta);
				const phi = (2 * Math.PI * s) / states + delta;
				x = regime.amp * Math.cos(phi) + 0.5 * rng.nextGaussian();
				y = regime.amp * Math.sin(phi) + 0.5 * rng.nextGaussian();
			}
			if (iq) {
				const col = Math.floor(((x + extent) / (2 * extent)) * iqBins);
				const row = Math.floor(((y + extent) / (2 * extent)) * iqBins);
				if (col >= 0 && col < iqBins && row >= 0 && row < iqBins) iq[row * iqBins + col] += 1;
			}
		}
		const inStates = shots - vacuum;
		const lock = inStates > 0 ? Math.min(1, Math.hypot(re, im) / inStates) : 0;

		// Slow mixing-chamber drift: an Ornstein–Uhlenbeck walk around the base temperature.
		const decay = Math.exp(-window_s / MXC_TAU_s);
		mxc_mK = MXC_BASE_mK + (mxc_mK - MXC_BASE_mK) * decay + MXC_SD_mK * Math.sqrt(1 - decay * decay) * rng.nextGaussian();

		elapsed_s += window_s;
		const frame: Frame = {
			seq: seq++,
			t: Math.round(options.startMs + elapsed_s * 1000),
			window_s,
			shots,
			vacuum,
			counts,
			lock: round(lock, 5),
			switches,
			dwell_s: round(dwell_s, 6),
			escapes,
			vacuum_s: round(window_s - dwell_s, 6),
			transitions,
			amp: round(Math.max(0, (regime.amp * inStates) / shots + 0.02 * rng.nextGaussian()), 4),
			aux: {
				mxc_mK: round(mxc_mK, 4),
				pump_dBm: round(-23 + 0.01 * rng.nextGaussian(), 3),
				bias_uV: round(regime.bias_uV + 0.01 * rng.nextGaussian(), 3)
			}
		};
		if (iq) frame.iq = { bins: iqBins, extent: round(extent, 4), counts: iq };
		return frame;
	}

	return {
		next,
		get elapsed_s() {
			return elapsed_s;
		},
		isLockLost
	};
}

/** `count` frames (or unbounded) from a fresh simulator. */
export function* simulateFrames(options: SimulatorOptions & { count?: number }): Generator<Frame> {
	const sim = createSimulator(options);
	for (let i = 0; options.count === undefined || i < options.count; i++) yield sim.next();
}

function round(value: number, digits: number): number {
	const f = 10 ** digits;
	return Math.round(value * f) / f;
}
