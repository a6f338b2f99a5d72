// The 2-D stochastic Heun stepper of the rotating-frame Langevin equation (see langevin.ts for the
// equation and its normalisation), its time step, and the capture regions around the states.
import { positive } from './langevin-run';
import { type FixedPoint, fixedPoints } from './fixed-points';
import { type ModelParams, makeDrift, modelCoefficients } from './model';
import { Rng } from './random';

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
export interface Setup {
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

export function setup(params: ModelParams, o: NoiseOptions): Setup {
	const D = noiseStrength(params, o.lambda, o.noiseFactor);
	const points = fixedPoints(params);
	const dt = o.dt === undefined ? chooseTimeStep(points, o.safety) : positive('dt', o.dt);
	const rMax = Math.max(...points.map((p) => p.r));
	const guardRadius = 4 * Math.max(rMax, Math.sqrt(D / (2 * modelCoefficients(params).gamma)) * 10);
	return { points, drift: makeDrift(params), dt, D, guardRadius };
}

/** Capture radius of each state: a fraction of its distance to the nearest other fixed point. */
export function captureRadii(states: FixedPoint[], all: FixedPoint[], fraction: number): number[] {
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

export function nearest(states: FixedPoint[], x: number, y: number): number {
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
