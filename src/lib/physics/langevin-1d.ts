// The 1-D overdamped mode: Kramers escape over a barrier, a check of the simulator against theory.
import { CHECK_EVERY, type RateInterval, type Run, type RunControl, count, positive, rateInterval, runToCompletion } from './langevin-run';
import { Rng, type Seed } from './random';

export interface Overdamped1DOptions extends RunControl {
	/** U′(x) of dx = −U′(x) dt + √(2D) dW. */
	potentialDerivative: (x: number) => number;
	D: number;
	dt: number;
	steps: number;
	seed: Seed;
	x0?: number;
	/** Keep every n-th position (default: 1000 points in all). */
	recordEvery?: number;
}

export interface Overdamped1DResult {
	x: Float64Array;
	recordInterval: number;
	final: number;
}

/** Heun steps of dx = −U′(x) dt + √(2D) dW; returns the recorded positions. */
export function* overdamped1DRun(o: Overdamped1DOptions): Run<Overdamped1DResult> {
	const D = positive('D', o.D);
	const dt = positive('dt', o.dt);
	const steps = count('steps', o.steps);
	const every = o.recordEvery === undefined ? Math.max(1, Math.ceil(steps / 1000)) : count('recordEvery', o.recordEvery);
	const Up = o.potentialDerivative;
	const rng = new Rng(o.seed);
	const sig = Math.sqrt(2 * D * dt);
	const out = new Float64Array(Math.floor(steps / every) + 1);
	let x = o.x0 ?? 0;
	out[0] = x;
	for (let n = 1; n <= steps; n++) {
		const w = sig * rng.nextGaussian();
		const f0 = -Up(x);
		const f1 = -Up(x + f0 * dt + w);
		x += 0.5 * dt * (f0 + f1) + w;
		if (n % every === 0) out[n / every] = x;
		if ((n & (CHECK_EVERY - 1)) === 0) yield n / steps;
	}
	return { x: out, recordInterval: every * dt, final: x };
}

/** Blocking form of overdamped1DRun. */
export function simulateOverdamped1D(o: Overdamped1DOptions): Overdamped1DResult {
	return runToCompletion(overdamped1DRun(o), o);
}

export interface WellToWellOptions extends RunControl {
	potentialDerivative: (x: number) => number;
	D: number;
	dt: number;
	duration: number;
	seed: Seed;
	/** The two minima [a, b], a < b; a transition is counted on reaching the other minimum. */
	wells: [number, number];
	/** Start position (default: the first well). */
	x0?: number;
	confidence?: number;
}

export interface WellToWellResult {
	transitions: number;
	aToB: number;
	bToA: number;
	exposure: number;
	rate_per_unit_time: number;
	interval: RateInterval;
	confidence: number;
	timeInA: number;
	timeInB: number;
	steps: number;
}

/**
 * Well-to-well transition rate of dx = −U′(x) dt + √(2D) dW with hysteresis at the minima: the
 * walker belongs to well a until it reaches b, and back. Each transition is a first passage from
 * one minimum to the other, so the rate estimates 1/T(a → b), T the mean first-passage time.
 */
export function* wellToWellRun(o: WellToWellOptions): Run<WellToWellResult> {
	const D = positive('D', o.D);
	const dt = positive('dt', o.dt);
	const duration = positive('duration', o.duration);
	const [a, b] = o.wells ?? [NaN, NaN];
	if (!(Number.isFinite(a) && Number.isFinite(b) && a < b)) {
		throw new RangeError(`wells must be two finite minima [a, b] with a < b, got ${String(o.wells)}`);
	}
	const confidence = o.confidence ?? 0.95;
	const Up = o.potentialDerivative;
	const rng = new Rng(o.seed);
	const sig = Math.sqrt(2 * D * dt);
	const steps = Math.ceil(duration / dt);
	let x = o.x0 ?? a;
	let inB = x >= b;
	let aToB = 0;
	let bToA = 0;
	let stepsInB = 0;
	for (let n = 1; n <= steps; n++) {
		const w = sig * rng.nextGaussian();
		const f0 = -Up(x);
		const f1 = -Up(x + f0 * dt + w);
		x += 0.5 * dt * (f0 + f1) + w;
		if (inB) {
			stepsInB++;
			if (x <= a) {
				inB = false;
				bToA++;
			}
		} else if (x >= b) {
			inB = true;
			aToB++;
		}
		if ((n & (CHECK_EVERY - 1)) === 0) yield n / steps;
	}
	const exposure = steps * dt;
	const transitions = aToB + bToA;
	return {
		transitions,
		aToB,
		bToA,
		exposure,
		rate_per_unit_time: transitions / exposure,
		interval: rateInterval(transitions, exposure, confidence),
		confidence,
		timeInA: exposure - stepsInB * dt,
		timeInB: stepsInB * dt,
		steps
	};
}

/** Blocking form of wellToWellRun. */
export function estimateWellToWellRate(o: WellToWellOptions): WellToWellResult {
	return runToCompletion(wellToWellRun(o), o);
}
