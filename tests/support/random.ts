// Seeded randomness shared by the statistical tests, so every Monte Carlo check draws from one
// generator and one Poisson sampler.

/** mulberry32: a small 32-bit PRNG, uniform on [0, 1) (common practice). */
export function mulberry32(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/**
 * Poisson deviate: Knuth's product-of-uniforms method (Knuth, TAOCP vol. 2, from memory) on pieces
 * of mean ≤ 30, summed — a sum of independent Poisson variables is Poisson, so this stays exact
 * for large means where e^{−μ} would underflow. For μ ≤ 30 it is the plain method.
 */
export function poissonKnuth(mu: number, random: () => number): number {
	const pieces = Math.max(1, Math.ceil(mu / 30));
	const limit = Math.exp(-mu / pieces);
	let total = 0;
	for (let p = 0; p < pieces; p++) {
		let k = 0;
		let prod = random();
		while (prod > limit) {
			k++;
			prod *= random();
		}
		total += k;
	}
	return total;
}
