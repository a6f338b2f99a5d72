// The numerical helpers behind the run-length methods: quadrature and dense solves.
import { describe, expect, it } from 'vitest';
import { gaussLegendre, gaussLegendreOn } from '$lib/stats/gauss-legendre';
import { solveLinearSystem } from '$lib/stats/linear-system';
import { uniformStream } from '../../support/random';

describe('Gauss–Legendre quadrature', () => {
	it('is exact for polynomials up to degree 2n − 1', () => {
		// ∫₋₁¹ x^d dx = 2/(d+1) for even d, 0 for odd d (calculus).
		for (const n of [1, 2, 5, 12, 40]) {
			const { nodes, weights } = gaussLegendre(n);
			for (let d = 0; d <= 2 * n - 1; d++) {
				let s = 0;
				for (let i = 0; i < n; i++) s += weights[i] * nodes[i] ** d;
				expect(s).toBeCloseTo(d % 2 === 0 ? 2 / (d + 1) : 0, 12);
			}
		}
	});

	it('maps to an interval', () => {
		// ∫₀³ e^{−x} dx = 1 − e^{−3}.
		const { nodes, weights } = gaussLegendreOn(20, 0, 3);
		let s = 0;
		for (let i = 0; i < 20; i++) s += weights[i] * Math.exp(-nodes[i]);
		expect(s).toBeCloseTo(1 - Math.exp(-3), 14);
	});
});

describe('solveLinearSystem', () => {
	const residual = (a: Float64Array, x: Float64Array, b: Float64Array, n: number) => {
		let worst = 0;
		for (let i = 0; i < n; i++) {
			let s = 0;
			for (let j = 0; j < n; j++) s += a[i * n + j] * x[j];
			worst = Math.max(worst, Math.abs(s - b[i]));
		}
		return worst;
	};

	it('solves I − R for a random substochastic R, and a system that needs pivoting', () => {
		const random = uniformStream(4);
		const n = 40;
		const a = new Float64Array(n * n);
		for (let i = 0; i < n; i++) {
			const row = Array.from({ length: n }, () => random());
			const total = row.reduce((p, q) => p + q, 0) / 0.97;
			for (let j = 0; j < n; j++) a[i * n + j] = (i === j ? 1 : 0) - row[j] / total;
		}
		const b = new Float64Array(n).fill(1);
		const x = solveLinearSystem(a, b, n);
		expect(x).not.toBeNull();
		expect(residual(a, x!, b, n)).toBeLessThan(1e-10);

		// A zero leading pivot forces the pivoting path.
		const p = Float64Array.from([0, 2, 1, 3, 1, 0, 1, 1, 4]);
		const pb = Float64Array.from([5, 4, 9]);
		const px = solveLinearSystem(p, pb, 3);
		expect(residual(p, px!, pb, 3)).toBeLessThan(1e-12);
	});

	it('reports a singular system as null', () => {
		expect(solveLinearSystem(Float64Array.from([1, 2, 2, 4]), Float64Array.from([1, 1]), 2)).toBeNull();
		expect(() => solveLinearSystem(new Float64Array(3), new Float64Array(2), 2)).toThrow(RangeError);
	});
});
