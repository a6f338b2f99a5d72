// Seeded random numbers for the simulator: the same seed gives the same run on every machine.

export interface Rng {
	/** Uniform on [0, 1). */
	uniform(): number;
	/** Standard normal (mean 0, sd 1). */
	normal(): number;
	/** Exponential waiting time for a process of `rate` events per unit time. */
	exponential(rate: number): number;
	/** Integer in [0, n). */
	int(n: number): number;
}

/** mulberry32: a 32-bit generator, small state, good enough for simulated data (not for crypto). */
export function createRng(seed: number): Rng {
	let a = (Math.trunc(seed) ^ 0x9e3779b9) >>> 0;
	let spare: number | null = null;
	const uniform = () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
	return {
		uniform,
		normal() {
			if (spare !== null) {
				const s = spare;
				spare = null;
				return s;
			}
			// Box–Muller; 1 − u keeps the logarithm away from 0.
			const r = Math.sqrt(-2 * Math.log(1 - uniform()));
			const theta = 2 * Math.PI * uniform();
			spare = r * Math.sin(theta);
			return r * Math.cos(theta);
		},
		exponential(rate: number) {
			return -Math.log(1 - uniform()) / rate;
		},
		int(n: number) {
			return Math.floor(uniform() * n);
		}
	};
}
