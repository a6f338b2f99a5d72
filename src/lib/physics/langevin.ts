// Quasi-classical Langevin simulation of the rotating-frame model (model.ts): escape from the
// vacuum, switching among the phase states, λ sweeps, and a 1-D overdamped mode for Kramers.
//
// Equation (Itô = Stratonovich here, the noise being additive):
//
//   dα = F(α) dt + √D dW,   D = γ·λ·(2n̄+1),   dW = (dW₁ + i dW₂)/√2,
//
// with F the drift of model.ts, dW₁, dW₂ independent real Wiener increments (variance dt each),
// so ⟨dW dW*⟩ = dt and ⟨dW dW⟩ = 0; each quadrature x, y receives √(D/2) dWᵢ. In this
// normalisation an undriven, undetuned oscillator settles at ⟨|α|²⟩ = D/(2γ) = λ(n̄ + ½): the
// symmetrised thermal value for [α, α†] = λ, which is what makes λ the dimensionless
// fluctuation parameter (effective Planck constant) and the noise fluctuation–dissipation
// consistent. noiseFactor is 2n̄+1, supplied by the caller (occupation.ts computes it).
//
// Stepping: stochastic Heun (predictor–corrector trapezoid), which for additive noise is of
// weak order 2 (Kloeden & Platen, Numerical Solution of SDEs, 1992, from memory; Greiner,
// Strittmatter & Honerkamp 1988, J. Stat. Phys. 51, 95, from memory). The step is
// dt = safety / max|μ| with μ the Jacobian eigenvalues at all fixed points (the fastest local
// relaxation or rotation rate of the flow), safety = 0.05 by default, so the deterministic part
// is resolved to better than 1e-4 per step at the fastest point; callers may pass dt.
//
// Rates are counts over exposure (the Poisson maximum-likelihood rate, censored trajectories
// contributing their time), with the exact Garwood interval of the count divided by the exposure.
import { makeDrift, modelCoefficients, type ModelParams } from './model';
import { fixedPoints, type FixedPoint } from './fixed-points';
import { Rng, deriveSeed, type Seed } from './random';
import { poissonInterval } from '../stats/poisson';

// ---------------------------------------------------------------- shared plumbing

export interface RateInterval {
	lower: number;
	upper: number;
}

/** Progress and cancellation for the long estimators; checked every CHECK_EVERY steps. */
export interface RunControl {
	/** Called with the completed fraction in [0, 1], at most about every 1 %. */
	onProgress?: (fraction: number) => void;
	signal?: AbortSignal;
	shouldStop?: () => boolean;
}

/** Thrown when a run is stopped through its signal or shouldStop. */
export class SimulationCancelled extends Error {
	constructor() {
		super('simulation cancelled');
		this.name = 'SimulationCancelled';
	}
}

const CHECK_EVERY = 4096;

/**
 * The estimators are generators that yield their completed fraction every CHECK_EVERY steps
 * and return their result, so that one body serves both a blocking call (runToCompletion)
 * and a worker that must keep its event loop turning to hear a cancel (runCooperatively).
 */
export type Run<T> = Generator<number, T, void>;

function reporter(control: RunControl): (fraction: number) => void {
	let last = -1;
	return (fraction) => {
		if (control.signal?.aborted || control.shouldStop?.()) throw new SimulationCancelled();
		if (control.onProgress && fraction - last >= 0.01) {
			last = fraction;
			control.onProgress(Math.min(1, Math.max(0, fraction)));
		}
	};
}

/** Drives a run to its end on the calling thread. */
export function runToCompletion<T>(run: Run<T>, control: RunControl = {}): T {
	const report = reporter(control);
	for (;;) {
		const r = run.next();
		if (r.done) {
			control.onProgress?.(1);
			return r.value;
		}
		report(r.value);
	}
}

/**
 * Drives a run in slices of about sliceMs, returning to the event loop between slices so that
 * messages (a cancel) are delivered; shouldStop/signal are checked at every yield.
 */
export async function runCooperatively<T>(run: Run<T>, control: RunControl = {}, sliceMs = 50): Promise<T> {
	const report = reporter(control);
	let sliceStart = Date.now();
	for (;;) {
		const r = run.next();
		if (r.done) {
			control.onProgress?.(1);
			return r.value;
		}
		report(r.value);
		if (Date.now() - sliceStart >= sliceMs) {
			await new Promise<void>((resolve) => setTimeout(resolve, 0));
			if (control.signal?.aborted || control.shouldStop?.()) throw new SimulationCancelled();
			sliceStart = Date.now();
		}
	}
}

/** Re-yields a sub-run's fractions mapped into [offset, offset + width]. */
function* scaled<T>(run: Run<T>, offset: number, width: number): Run<T> {
	for (;;) {
		const r = run.next();
		if (r.done) return r.value;
		yield offset + width * r.value;
	}
}

function positive(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) {
		throw new RangeError(`${name} must be a finite number > 0, got ${String(v)}`);
	}
	return v;
}

function count(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isInteger(v) || v < 1) {
		throw new RangeError(`${name} must be a positive integer, got ${String(v)}`);
	}
	return v;
}

function rateInterval(n: number, exposure: number, confidence: number): RateInterval {
	const { lower, upper } = poissonInterval(n, confidence);
	return { lower: lower / exposure, upper: upper / exposure };
}

// ---------------------------------------------------------------- the 2-D stepper

/** Noise strength D = γ·λ·(2n̄+1) of the complex Langevin force. */
export function noiseStrength(params: ModelParams, lambda: number, noiseFactor: number): number {
	const { gamma } = modelCoefficients(params);
	positive('lambda', lambda);
	if (typeof noiseFactor !== 'number' || !Number.isFinite(noiseFactor) || noiseFactor < 1) {
		throw new RangeError(`noiseFactor (2n̄+1) must be a finite number ≥ 1, got ${String(noiseFactor)}`);
	}
	if (gamma <= 0) throw new RangeError('damping must be > 0 for a noisy simulation (the noise is set by it)');
	return gamma * lambda * noiseFactor;
}

/** The largest |eigenvalue| of the Jacobian over the fixed points: the fastest rate of the flow. */
export function fastestRate(points: FixedPoint[]): number {
	let m = 0;
	for (const p of points) for (const e of p.eigenvalues) m = Math.max(m, Math.hypot(e.re, e.im));
	return m;
}

/** dt = safety / (fastest rate); see the file header. */
export function chooseTimeStep(points: FixedPoint[], safety = 0.05): number {
	positive('safety', safety);
	const rate = fastestRate(points);
	if (!(rate > 0)) throw new RangeError('the flow has no finite nonzero rate to set the time step');
	return safety / rate;
}

/** One complex-amplitude trajectory advanced by stochastic Heun steps. */
export class HeunStepper {
	x = 0;
	y = 0;
	private readonly f0 = new Float64Array(2);
	private readonly f1 = new Float64Array(2);
	private readonly g = new Float64Array(2);
	private readonly sigma: number;

	constructor(
		private readonly drift: (x: number, y: number, out: Float64Array) => void,
		readonly dt: number,
		readonly D: number,
		private readonly rng: Rng
	) {
		this.sigma = Math.sqrt((D * dt) / 2);
	}

	step(): void {
		const { f0, f1, g, dt } = this;
		this.rng.gaussianPair(g);
		const nx = this.sigma * g[0];
		const ny = this.sigma * g[1];
		const x = this.x;
		const y = this.y;
		this.drift(x, y, f0);
		this.drift(x + f0[0] * dt + nx, y + f0[1] * dt + ny, f1);
		this.x = x + 0.5 * dt * (f0[0] + f1[0]) + nx;
		this.y = y + 0.5 * dt * (f0[1] + f1[1]) + ny;
	}
}

/** Shared set-up of the 2-D estimators: fixed points, step, noise, guard radius. */
interface Setup {
	points: FixedPoint[];
	drift: (x: number, y: number, out: Float64Array) => void;
	dt: number;
	D: number;
	/** Beyond this radius a trajectory is taken to have run away (unconfined model). */
	guardRadius: number;
}

export interface NoiseOptions {
	/** Dimensionless fluctuation parameter λ (> 0). */
	lambda: number;
	/** 2n̄+1 (≥ 1). */
	noiseFactor: number;
	/** Time step; default from chooseTimeStep. */
	dt?: number;
	/** Safety factor for the default time step (default 0.05). */
	safety?: number;
}

function setup(params: ModelParams, o: NoiseOptions): Setup {
	const D = noiseStrength(params, o.lambda, o.noiseFactor);
	const points = fixedPoints(params);
	const dt = o.dt === undefined ? chooseTimeStep(points, o.safety) : positive('dt', o.dt);
	const rMax = Math.max(...points.map((p) => p.r));
	const guardRadius = 4 * Math.max(rMax, Math.sqrt(D / (2 * modelCoefficients(params).gamma)) * 10);
	return { points, drift: makeDrift(params), dt, D, guardRadius };
}

/** Capture radius of each state: a fraction of its distance to the nearest other fixed point. */
function captureRadii(states: FixedPoint[], all: FixedPoint[], fraction: number): number[] {
	positive('captureFraction', fraction);
	if (fraction >= 0.5) throw new RangeError(`captureFraction must be < 0.5, got ${fraction}`);
	return states.map((s) => {
		let d = Infinity;
		for (const p of all) {
			const dist = Math.hypot(p.x - s.x, p.y - s.y);
			if (dist > 0) d = Math.min(d, dist); // skip the state itself (states may be copies)
		}
		return fraction * (Number.isFinite(d) ? d : s.r || 1);
	});
}

// ---------------------------------------------------------------- (a) escape from the vacuum

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
			'the vacuum is not stable at this operating point (it is a ' +
				vacuum.stability +
				' point), so there is no escape from it to estimate'
		);
	}
	const states = s.points.filter((p) => p.kind === 'stable');
	const useRadius = options.escapeRadius !== undefined;
	if (states.length === 0 && !useRadius) {
		throw new RangeError('there are no phase states to escape to at this operating point (give escapeRadius to time the exit from the vacuum alone)');
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

function nearest(states: FixedPoint[], x: number, y: number): number {
	let best = 0;
	let bd = Infinity;
	states.forEach((p, k) => {
		const d = Math.hypot(p.x - x, p.y - y);
		if (d < bd) {
			bd = d;
			best = k;
		}
	});
	return best;
}

// ---------------------------------------------------------------- (b) switching among states

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

// ---------------------------------------------------------------- λ sweep (ln W against 1/λ)

export type SweepOptions =
	| ({ estimator?: 'escape'; lambdas: number[] } & Omit<EscapeOptions, 'lambda'>)
	| ({ estimator: 'switching'; lambdas: number[] } & Omit<SwitchingOptions, 'lambda'>);

export interface SweepPoint {
	lambda: number;
	inverseLambda: number;
	/** rate = count / exposure, the form activation.ts's fitFromSimulation takes. */
	rate: number;
	count: number;
	exposure: number;
	lnRate: number;
	interval: RateInterval;
	result: EscapeResult | SwitchingResult;
}

export interface SweepResult {
	estimator: 'escape' | 'switching';
	points: SweepPoint[];
}

/** The escape (or switching) estimate at each λ, each with its own derived seed. */
export function* sweepRun(params: ModelParams, options: SweepOptions): Run<SweepResult> {
	const lambdas = options.lambdas;
	if (!Array.isArray(lambdas) || lambdas.length === 0) throw new RangeError('lambdas must be a non-empty array');
	lambdas.forEach((l, i) => positive(`lambdas[${i}]`, l));
	const estimator = options.estimator ?? 'escape';
	const points: SweepPoint[] = [];
	for (let i = 0; i < lambdas.length; i++) {
		const lambda = lambdas[i];
		const seed = deriveSeed(options.seed, 1_000_003 + i);
		const at = i / lambdas.length;
		const width = 1 / lambdas.length;
		if (options.estimator === 'switching') {
			const o: SwitchingOptions = { ...options, lambda, seed };
			const r = yield* scaled(switchingRateRun(params, o), at, width);
			points.push(point(lambda, r.switches, r.exposure, r.interval, r));
		} else {
			const o: EscapeOptions = { ...options, lambda, seed };
			const r = yield* scaled(escapeRateRun(params, o), at, width);
			points.push(point(lambda, r.escapes, r.exposure, r.interval, r));
		}
	}
	return { estimator, points };
}

/** Blocking form of sweepRun. */
export function sweepRates(params: ModelParams, options: SweepOptions): SweepResult {
	return runToCompletion(sweepRun(params, options), options);
}

function point(lambda: number, n: number, exposure: number, interval: RateInterval, result: EscapeResult | SwitchingResult): SweepPoint {
	const rate = n / exposure;
	return { lambda, inverseLambda: 1 / lambda, rate, count: n, exposure, lnRate: Math.log(rate), interval, result };
}

// ---------------------------------------------------------------- a sample path, for plots

export interface PathOptions extends NoiseOptions {
	duration: number;
	seed: Seed;
	x0?: number;
	y0?: number;
	/** Keep every n-th step (default: about 2000 points in all). */
	recordEvery?: number;
}

export interface SamplePath {
	dt: number;
	/** Time between recorded points. */
	recordInterval: number;
	x: Float64Array;
	y: Float64Array;
}

export function simulatePath(params: ModelParams, options: PathOptions): SamplePath {
	const duration = positive('duration', options.duration);
	const s = setup(params, options);
	const n = Math.ceil(duration / s.dt);
	const every = options.recordEvery === undefined ? Math.max(1, Math.ceil(n / 2000)) : count('recordEvery', options.recordEvery);
	const st = new HeunStepper(s.drift, s.dt, s.D, new Rng(options.seed));
	st.x = options.x0 ?? 0;
	st.y = options.y0 ?? 0;
	const m = Math.floor(n / every) + 1;
	const x = new Float64Array(m);
	const y = new Float64Array(m);
	x[0] = st.x;
	y[0] = st.y;
	for (let i = 1; i < m; i++) {
		for (let k = 0; k < every; k++) st.step();
		x[i] = st.x;
		y[i] = st.y;
	}
	return { dt: s.dt, recordInterval: every * s.dt, x, y };
}

// ---------------------------------------------------------------- 1-D overdamped mode (Kramers)

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
