// Gauss–Legendre quadrature nodes and weights, for the run-length integral equations.

const cache = new Map<number, { nodes: Float64Array; weights: Float64Array }>();

/**
 * The n-point Gauss–Legendre rule on [−1, 1]: nodes are the roots of P_n, found by Newton's
 * method from the Tricomi initial guesses cos(π(i − 1/4)/(n + 1/2)); weights 2/((1−x²)P_n'(x)²).
 * Exact for polynomials of degree ≤ 2n − 1.
 */
export function gaussLegendre(n: number): { nodes: Float64Array; weights: Float64Array } {
	if (!Number.isInteger(n) || n < 1) {
		throw new RangeError(`number of quadrature points must be a positive integer, got ${n}`);
	}
	const hit = cache.get(n);
	if (hit) return hit;
	const nodes = new Float64Array(n);
	const weights = new Float64Array(n);
	for (let i = 0; i < Math.ceil(n / 2); i++) {
		let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
		let dp = 0;
		for (let iter = 0; iter < 100; iter++) {
			// Three-term recurrence for P_n(x) and P_{n-1}(x).
			let p0 = 1;
			let p1 = x;
			for (let k = 2; k <= n; k++) {
				const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
				p0 = p1;
				p1 = p2;
			}
			dp = (n * (x * p1 - p0)) / (x * x - 1);
			const dx = p1 / dp;
			x -= dx;
			if (Math.abs(dx) < 1e-16) break;
		}
		const w = 2 / ((1 - x * x) * dp * dp);
		nodes[i] = -x;
		nodes[n - 1 - i] = x;
		weights[i] = w;
		weights[n - 1 - i] = w;
	}
	const rule = { nodes, weights };
	cache.set(n, rule);
	return rule;
}

/** The n-point Gauss–Legendre rule mapped to [lo, hi]. */
export function gaussLegendreOn(n: number, lo: number, hi: number): { nodes: Float64Array; weights: Float64Array } {
	const { nodes, weights } = gaussLegendre(n);
	const half = (hi - lo) / 2;
	const mid = (hi + lo) / 2;
	return {
		nodes: nodes.map((x) => mid + half * x),
		weights: weights.map((w) => half * w)
	};
}
