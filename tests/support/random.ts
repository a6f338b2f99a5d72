// Seeded randomness shared by the statistical tests: uniforms from the project's one generator
// (src/lib/physics/random.ts) and the one Poisson sampler.
export { uniformStream } from '../../src/lib/physics/random';

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
