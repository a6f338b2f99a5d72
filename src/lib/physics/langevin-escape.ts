// Escape from the vacuum: the Langevin estimate of the rate out of the vacuum state's basin.
import { CHECK_EVERY, type RateInterval, type Run, type RunControl, count, positive, rateInterval, runToCompletion } from './langevin-run';
import { HeunStepper, type NoiseOptions, captureRadii, nearest, setup } from './langevin-stepper';
import type { FixedPoint } from './fixed-points';
import type { ModelParams } from './model';
import { Rng, type Seed, deriveSeed } from './random';

export interface EscapeOptions extends NoiseOptions, RunControl {
	/** Independent trajectories, each started at α = 0. */
	trajectories: number;
	/** Each trajectory is censored at this time if it has not escaped. */
	maxTime: number;
	seed: Seed;
	/**
	 * Escape criterion. Default: the trajectory comes within captureFraction × (distance to the
	 * nearest other fixed point) of a phase state. With escapeRadius set instead: |α| reaches it
	 * (take it well past the saddles, e.g. 1.5× their radius, so that recrossings are rare).
	 */
	captureFraction?: number;
	escapeRadius?: number;
	/** Confidence of the rate interval (default 0.95). */
	confidence?: number;
}

export interface EscapeResult {
	rate_per_unit_time: number;
	escapes: number;
	/** Trajectories still in the vacuum at maxTime. */
	censored: number;
	/** Escapes that left through the guard radius instead of reaching a phase state. */
	runaways: number;
	/** Total simulated time: first-passage times of the escapes plus maxTime per censored one. */
	exposure: number;
	interval: RateInterval;
	confidence: number;
	/** Mean first-passage time of the trajectories that escaped (NaN if none did). */
	meanFirstPassage: number;
	/** The phase states, sorted by phase, and how many escapes ended in each. */
	states: FixedPoint[];
	destinations: number[];
	criterion: string;
	dt: number;
	D: number;
	steps: number;
	lambda: number;
	noiseFactor: number;
	trajectories: number;
	maxTime: number;
}

/**
 * Escape rate from the vacuum by an ensemble of first passages (see EscapeOptions for the
 * criterion). Requires an attracting vacuum and at least one phase state.
 */
export function* escapeRateRun(params: ModelParams, options: EscapeOptions): Run<EscapeResult> {
	const trajectories = count('trajectories', options.trajectories);
	const maxTime = positive('maxTime', options.maxTime);
	const confidence = options.confidence ?? 0.95;
	const s = setup(params, options);
	const vacuum = s.points[0];
	if (vacuum.stability !== 'attracting') {
		throw new RangeError(
			'the vacuum is not stable at this operating point (it is a ' + vacuum.stability + ' point), so there is no escape from it to estimate'
		);
	}
	const states = s.points.filter((p) => p.kind === 'stable');
	const useRadius = options.escapeRadius !== undefined;
	if (states.length === 0 && !useRadius) {
		throw new RangeError(
			'there are no phase states to escape to at this operating point (give escapeRadius to time the exit from the vacuum alone)'
		);
	}
	const escapeR = useRadius ? positive('escapeRadius', options.escapeRadius) : 0;
	const rc = captureRadii(states, s.points, options.captureFraction ?? 0.3);
	const rc2 = rc.map((r) => r * r);
	// Nothing can be captured closer to the origin than this.
	const gate = useRadius ? escapeR : Math.max(0, Math.min(...states.map((p, k) => p.r - rc[k])));
	const gate2 = gate * gate;
	const guard = Math.max(s.guardRadius, 2 * escapeR);
	const guard2 = guard * guard;
	const stepsPerTraj = Math.ceil(maxTime / s.dt);

	let escapes = 0;
	let runaways = 0;
	let exposure = 0;
	let passageSum = 0;
	let steps = 0;
	const destinations = states.map(() => 0);

	for (let i = 0; i < trajectories; i++) {
		const st = new HeunStepper(s.drift, s.dt, s.D, new Rng(deriveSeed(options.seed, i)));
		let n = 0;
		let dest = -1;
		for (; n < stepsPerTraj; n++) {
			st.step();
			const r2 = st.x * st.x + st.y * st.y;
			if (r2 >= gate2) {
				if (r2 > guard2) {
					dest = -2;
					n++;
					break;
				}
				if (useRadius) {
					dest = states.length ? nearest(states, st.x, st.y) : -3;
					n++;
					break;
				}
				for (let k = 0; k < states.length; k++) {
					const dx = st.x - states[k].x;
					const dy = st.y - states[k].y;
					if (dx * dx + dy * dy < rc2[k]) {
						dest = k;
						break;
					}
				}
				if (dest >= 0) {
					n++;
					break;
				}
			}
			if ((n & (CHECK_EVERY - 1)) === 0) yield (i + n / stepsPerTraj) / trajectories;
		}
		steps += n;
		const t = n * s.dt;
		exposure += t;
		if (dest === -1) continue;
		escapes++;
		passageSum += t;
		if (dest === -2) runaways++;
		else if (dest >= 0) destinations[dest]++;
	}
	return {
		rate_per_unit_time: escapes / exposure,
		escapes,
		censored: trajectories - escapes,
		runaways,
		exposure,
		interval: rateInterval(escapes, exposure, confidence),
		confidence,
		meanFirstPassage: escapes ? passageSum / escapes : NaN,
		states,
		destinations,
		criterion: useRadius
			? `|α| ≥ ${escapeR}`
			: `within ${options.captureFraction ?? 0.3} × (distance to nearest other fixed point) of a phase state`,
		dt: s.dt,
		D: s.D,
		steps,
		lambda: options.lambda,
		noiseFactor: options.noiseFactor,
		trajectories,
		maxTime
	};
}

/** Blocking form of escapeRateRun. */
export function estimateEscapeRate(params: ModelParams, options: EscapeOptions): EscapeResult {
	return runToCompletion(escapeRateRun(params, options), options);
}
