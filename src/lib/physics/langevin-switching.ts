// Switching among the phase states: the Langevin estimate of the rate of moves between states.
import { CHECK_EVERY, type RateInterval, type Run, type RunControl, count, positive, rateInterval, runToCompletion } from './langevin-run';
import { HeunStepper, type NoiseOptions, captureRadii, setup } from './langevin-stepper';
import type { FixedPoint } from './fixed-points';
import type { ModelParams } from './model';
import { Rng, type Seed, deriveSeed } from './random';

export interface SwitchingOptions extends NoiseOptions, RunControl {
	/** Length of each trajectory. */
	duration: number;
	seed: Seed;
	/** Independent trajectories (default 1); trajectory i starts at phase state i mod K. */
	trajectories?: number;
	/** Start every trajectory at this index of `states` instead. */
	startState?: number;
	/** A state is entered when within this fraction of its distance to the nearest other fixed point (default 0.3). */
	captureFraction?: number;
	confidence?: number;
}

export interface StateInfo extends FixedPoint {
	isVacuum: boolean;
}

export interface SwitchingResult {
	/** The attracting fixed points: the phase states by phase, then the vacuum if it attracts. */
	states: StateInfo[];
	/** Transitions between distinct states (vacuum included), total and per ordered pair. */
	switches: number;
	rate_per_unit_time: number;
	interval: RateInterval;
	confidence: number;
	exposure: number;
	/** counts[i][j]: transitions from states[i] to states[j]. */
	counts: number[][];
	/** counts[i][j] divided by the time spent in state i: the rate of i → j. */
	pairRates: number[][];
	/** Time assigned to each state (hysteresis: the last state entered) and its fraction. */
	occupancyTime: number[];
	occupation: number[];
	/** Entries into each state, the starting state of each trajectory included. */
	visits: number[];
	/** Switches between phase states counted through any stay in the vacuum. */
	phaseSwitches: { count: number; rate_per_unit_time: number; interval: RateInterval; counts: number[][] };
	/** Trajectories stopped because they left the guard radius (unconfined model). */
	runaways: number;
	dt: number;
	D: number;
	steps: number;
	lambda: number;
	noiseFactor: number;
}

/**
 * Switching among the attracting states from long trajectories. Each instant belongs to the
 * last state entered, a state being entered when the trajectory comes within its capture
 * radius (hysteresis at the states, not at the basin boundaries, so recrossings near a saddle
 * are not counted).
 */
export function* switchingRateRun(params: ModelParams, options: SwitchingOptions): Run<SwitchingResult> {
	const duration = positive('duration', options.duration);
	const trajectories = count('trajectories', options.trajectories ?? 1);
	const confidence = options.confidence ?? 0.95;
	const s = setup(params, options);
	const phase = s.points.filter((p) => p.kind === 'stable');
	const states: StateInfo[] = phase.map((p) => ({ ...p, isVacuum: false }));
	if (s.points[0].stability === 'attracting') states.push({ ...s.points[0], isVacuum: true });
	const K = states.length;
	if (K < 2) throw new RangeError(`switching needs at least two attracting states; this operating point has ${K}`);
	if (options.startState !== undefined && !(Number.isInteger(options.startState) && options.startState >= 0 && options.startState < K)) {
		throw new RangeError(`startState must be an index from 0 to ${K - 1}, got ${options.startState}`);
	}
	const rc = captureRadii(states, s.points, options.captureFraction ?? 0.3);
	const rc2 = rc.map((r) => r * r);
	const guard2 = s.guardRadius * s.guardRadius;
	const sx = states.map((p) => p.x);
	const sy = states.map((p) => p.y);
	const nPhase = phase.length;
	const zeros = () => states.map(() => states.map(() => 0));
	const counts = zeros();
	const phaseCounts = zeros();
	const occupancyTime = states.map(() => 0);
	const visits = states.map(() => 0);
	const stepsPerTraj = Math.ceil(duration / s.dt);
	let steps = 0;
	let exposure = 0;
	let runaways = 0;

	for (let i = 0; i < trajectories; i++) {
		const start = options.startState ?? (nPhase > 0 ? i % nPhase : i % K);
		const st = new HeunStepper(s.drift, s.dt, s.D, new Rng(deriveSeed(options.seed, i)));
		st.x = sx[start];
		st.y = sy[start];
		let cur = start;
		let lastPhase = states[start].isVacuum ? -1 : start;
		let since = 0; // step at which `cur` was entered
		visits[start]++;
		let n = 0;
		for (; n < stepsPerTraj; n++) {
			st.step();
			const x = st.x;
			const y = st.y;
			if (x * x + y * y > guard2) {
				runaways++;
				n++;
				break;
			}
			for (let k = 0; k < K; k++) {
				if (k === cur) continue;
				const dx = x - sx[k];
				const dy = y - sy[k];
				if (dx * dx + dy * dy < rc2[k]) {
					counts[cur][k]++;
					occupancyTime[cur] += (n + 1 - since) * s.dt;
					since = n + 1;
					cur = k;
					visits[k]++;
					if (!states[k].isVacuum) {
						if (lastPhase >= 0 && lastPhase !== k) phaseCounts[lastPhase][k]++;
						lastPhase = k;
					}
					break;
				}
			}
			if ((n & (CHECK_EVERY - 1)) === 0) yield (i + n / stepsPerTraj) / trajectories;
		}
		occupancyTime[cur] += (n - since) * s.dt;
		steps += n;
		exposure += n * s.dt;
	}
	const sum = (m: number[][]) => m.reduce((a, row) => a + row.reduce((b, v) => b + v, 0), 0);
	const switches = sum(counts);
	const nPhaseSwitches = sum(phaseCounts);
	return {
		states,
		switches,
		rate_per_unit_time: switches / exposure,
		interval: rateInterval(switches, exposure, confidence),
		confidence,
		exposure,
		counts,
		pairRates: counts.map((row, i) => row.map((c) => (occupancyTime[i] > 0 ? c / occupancyTime[i] : 0))),
		occupancyTime,
		occupation: occupancyTime.map((t) => t / exposure),
		visits,
		phaseSwitches: {
			count: nPhaseSwitches,
			rate_per_unit_time: nPhaseSwitches / exposure,
			interval: rateInterval(nPhaseSwitches, exposure, confidence),
			counts: phaseCounts
		},
		runaways,
		dt: s.dt,
		D: s.D,
		steps,
		lambda: options.lambda,
		noiseFactor: options.noiseFactor
	};
}

/** Blocking form of switchingRateRun. */
export function estimateSwitchingRate(params: ModelParams, options: SwitchingOptions): SwitchingResult {
	return runToCompletion(switchingRateRun(params, options), options);
}
