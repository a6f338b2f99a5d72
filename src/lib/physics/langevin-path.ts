// A sample path of the 2-D Langevin equation, for plots.
import { count, positive } from './langevin-run';
import { HeunStepper, type NoiseOptions, setup } from './langevin-stepper';
import type { ModelParams } from './model';
import { Rng, type Seed } from './random';

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
