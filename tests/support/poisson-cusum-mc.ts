// Seeded Monte Carlo of the one-sided Poisson CUSUM's run length, straight from the recursion
// S ← max(0, S + K·ln ρ − μ(ρ − 1)) (Lucas 1985) with a signal at S ≥ h: the check on the run
// lengths of stats/cusum.ts that assumes nothing about how they are computed.
import { uniformStream } from './random';

/**
 * Poisson deviates by inversion of the distribution function with a guide table (Devroye 1986,
 * §III.2, from memory), on 53-bit uniforms so that counts of probability far below 2⁻³² still
 * occur. One uniform per deviate: Knuth's product method needs μ + 1 of them.
 */
export function poissonInversionSampler(mu: number, random: () => number): () => number {
	const cdf: number[] = [];
	let p = Math.exp(-mu);
	let sum = 0;
	for (let x = 0; sum < 1 - 1e-16 || x <= mu; x++) {
		sum += p;
		cdf.push(sum);
		p *= mu / (x + 1);
		if (x > mu + 40 * Math.sqrt(mu + 1) + 40) break;
	}
	const last = cdf.length - 1;
	const G = cdf.length * 4;
	const guide = new Int32Array(G);
	for (let g = 0, x = 0; g < G; g++) {
		while (x < last && cdf[x] <= g / G) x++;
		guide[g] = x;
	}
	const uniform53 = () => (Math.floor(random() * 2 ** 21) * 2 ** 32 + Math.floor(random() * 2 ** 32)) / 2 ** 53;
	return () => {
		const u = uniform53();
		let x = guide[Math.floor(u * G)];
		while (x < last && u >= cdf[x]) x++;
		return x;
	};
}

/** Mean run length and its standard error over `runs` seeded runs from S = 0. */
export function simulatePoissonCusumArl(o: { h: number; rho: number; mu: number; trueRatio?: number; runs: number; seed: number }): {
	mean: number;
	se: number;
} {
	const sample = poissonInversionSampler((o.trueRatio ?? 1) * o.mu, uniformStream(o.seed));
	const a = Math.log(o.rho);
	const b = o.mu * (o.rho - 1);
	let s1 = 0;
	let s2 = 0;
	for (let r = 0; r < o.runs; r++) {
		let S = 0;
		let n = 0;
		do {
			n++;
			S = Math.max(0, S + sample() * a - b);
		} while (S < o.h);
		s1 += n;
		s2 += n * n;
	}
	const mean = s1 / o.runs;
	return { mean, se: Math.sqrt((s2 / o.runs - mean * mean) / (o.runs - 1)) };
}
