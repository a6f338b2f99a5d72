// Rotating-frame model: the vector field against Hamilton's equations of H by finite differences,
// the Jacobian against finite differences of the field, the M = 2 linearisation and bad input.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { driveWeight, hamiltonian, jacobian, phaseStateCount, vectorField, type ModelParams } from '$lib/physics/model';

const kerr = (order: 2 | 3 | 4, detuning: number, damping: number, drive: number, K: number): ModelParams => ({
	order,
	detuning,
	damping,
	drive,
	nonlinearity: { kind: 'kerr', K }
});
const junction = (order: 2 | 3 | 4, detuning: number, damping: number, drive: number, eta: number, K?: number): ModelParams => ({
	order,
	detuning,
	damping,
	drive,
	nonlinearity: K === undefined ? { kind: 'junction', eta } : { kind: 'junction', eta, K }
});

const samples: ModelParams[] = [
	kerr(2, 0.3, 0.7, 1.4, 0.2),
	kerr(3, -0.5, 1, 0.4, 0.15),
	kerr(4, -1, 0.1, 0.2, 0.5),
	junction(2, 0.2, 0.3, 1, -0.1),
	junction(3, 0, 0.5, 0.6, -0.05, 0.02),
	junction(4, -0.4, 0.05, 0.8, 0.07)
];

/** Central difference with step h. */
const d = (f: (t: number) => number, t: number, h = 1e-5) => (f(t + h) - f(t - h)) / (2 * h);

describe('vectorField', () => {
	// With α = (Q + iP)/√2, Hamilton's equations dQ/dt = ∂H/∂P, dP/dt = −∂H/∂Q (plus damping −γα)
	// read dx/dt = ½ ∂H/∂y − γx, dy/dt = −½ ∂H/∂x − γy: the same as −i∂H/∂α* − γα, because
	// ∂/∂α* = ½(∂/∂x + i ∂/∂y). Checked by differentiating hamiltonian() numerically, an
	// independent path from the closed-form drift in model.ts.
	it.each(samples.map((p, i) => [i, p] as const))('is −i∂H/∂α* − γα (sample %i)', (_, p) => {
		fc.assert(
			fc.property(fc.double({ min: -2, max: 2, noNaN: true }), fc.double({ min: -2, max: 2, noNaN: true }), (x, y) => {
				const [fx, fy] = vectorField(p, x, y);
				const Hx = d((t) => hamiltonian(p, t, y), x);
				const Hy = d((t) => hamiltonian(p, x, t), y);
				const scale = 1 + Math.abs(Hx) + Math.abs(Hy);
				expect(Math.abs(fx - (Hy / 2 - p.damping * x))).toBeLessThan(1e-6 * scale);
				expect(Math.abs(fy - (-Hx / 2 - p.damping * y))).toBeLessThan(1e-6 * scale);
			}),
			{ numRuns: 60, seed: 42 }
		);
	});

	it('vanishes at the vacuum', () => {
		for (const p of samples) expect(Math.hypot(...vectorField(p, 0, 0))).toBe(0);
	});
});

describe('jacobian', () => {
	it.each(samples.map((p, i) => [i, p] as const))('matches finite differences of the field (sample %i)', (_, p) => {
		fc.assert(
			fc.property(fc.double({ min: -2, max: 2, noNaN: true }), fc.double({ min: -2, max: 2, noNaN: true }), (x, y) => {
				const J = jacobian(p, x, y);
				const col0 = [d((t) => vectorField(p, t, y)[0], x), d((t) => vectorField(p, t, y)[1], x)];
				const col1 = [d((t) => vectorField(p, x, t)[0], y), d((t) => vectorField(p, x, t)[1], y)];
				const scale = 1 + Math.max(...J.flat().map(Math.abs));
				expect(Math.abs(J[0][0] - col0[0])).toBeLessThan(1e-6 * scale);
				expect(Math.abs(J[1][0] - col0[1])).toBeLessThan(1e-6 * scale);
				expect(Math.abs(J[0][1] - col1[0])).toBeLessThan(1e-6 * scale);
				expect(Math.abs(J[1][1] - col1[1])).toBeLessThan(1e-6 * scale);
			}),
			{ numRuns: 60, seed: 7 }
		);
	});

	it('has trace −2γ everywhere (the Hamiltonian part is divergence-free: Liouville)', () => {
		// Hamiltonian flows preserve phase-space area (Liouville's theorem, any mechanics text), so
		// only the damping −γα contributes to the divergence: tr J = −2γ at every point.
		for (const p of samples) {
			for (const [x, y] of [
				[0.3, -1.2],
				[1.7, 0.4],
				[-0.8, -0.9]
			]) {
				const J = jacobian(p, x, y);
				expect(J[0][0] + J[1][1]).toBeCloseTo(-2 * p.damping, 12);
			}
		}
	});

	it('gives the parametric-amplifier eigenvalues −γ ± √(ε² − δ²) at the M = 2 vacuum', () => {
		// Linearising dα/dt = −i(δα + εα*) − γα (H = δ|α|² + (ε/2)(α² + α*²), REFERENCES.md form
		// with F = ε) gives the matrix [[−γ−iδ, −iε], [iε, −γ+iδ]] on (α, α*), with trace −2γ and
		// determinant γ² + δ² − ε²: eigenvalues −γ ± √(ε² − δ²). Compared with the real Jacobian's
		// trace and determinant.
		for (const [delta, gamma, eps] of [
			[0.3, 0.7, 1.4],
			[-1.1, 0.2, 0.5],
			[0, 1, 2]
		]) {
			const J = jacobian(kerr(2, delta, gamma, eps, 0.3), 0, 0);
			expect(J[0][0] + J[1][1]).toBeCloseTo(-2 * gamma, 12);
			expect(J[0][0] * J[1][1] - J[0][1] * J[1][0]).toBeCloseTo(gamma ** 2 + delta ** 2 - eps ** 2, 12);
		}
	});
});

describe('hamiltonian', () => {
	it('is the stated polynomial, written out here in polar form', () => {
		// H = δr² + g_M(ε + ηr²)·2r^M cos Mθ + Kr⁴ with g_2 = ½, g_3 = g_4 = 1 (model.ts normalisation).
		const r = 1.3;
		const th = 0.7;
		const x = r * Math.cos(th);
		const y = r * Math.sin(th);
		for (const p of samples) {
			const nl = p.nonlinearity;
			const eta = nl.kind === 'junction' ? nl.eta : 0;
			const K = nl.kind === 'kerr' ? nl.K : (nl.K ?? 0);
			const g = p.order === 2 ? 0.5 : 1;
			const expected = p.detuning * r * r + g * (p.drive + eta * r * r) * 2 * r ** p.order * Math.cos(p.order * th) + K * r ** 4;
			expect(hamiltonian(p, x, y)).toBeCloseTo(expected, 12);
		}
		expect(driveWeight(2)).toBe(0.5);
		expect(driveWeight(3)).toBe(1);
	});
});

describe('phaseStateCount', () => {
	it('is M for Kerr and 2M for the junction term', () => {
		// Facts of the trade (REFERENCES.md, common practice): M states for Kerr, 2M for the junction type.
		for (const M of [2, 3, 4] as const) {
			expect(phaseStateCount(kerr(M, 0, 1, 1, 0.1))).toBe(M);
			expect(phaseStateCount(junction(M, 0, 1, 1, -0.1))).toBe(2 * M);
		}
	});
});

describe('bad input', () => {
	it('names the problem', () => {
		const ok = kerr(3, 0, 1, 0.3, 0.1);
		expect(() => vectorField({ ...ok, order: 5 as 3 }, 0, 0)).toThrow(/order \(M\) must be 2, 3 or 4/);
		expect(() => vectorField({ ...ok, damping: -1 }, 0, 0)).toThrow(/damping must be ≥ 0/);
		expect(() => vectorField({ ...ok, drive: Number.NaN }, 0, 0)).toThrow(/drive must be a finite number/);
		expect(() => vectorField({ ...ok, detuning: Infinity }, 0, 0)).toThrow(/detuning must be a finite number/);
		expect(() => vectorField({ ...ok, nonlinearity: { kind: 'cubic' } as never }, 0, 0)).toThrow(
			/nonlinearity.kind must be 'kerr' or 'junction'/
		);
		expect(() => vectorField({ ...ok, nonlinearity: { kind: 'junction' } as never }, 0, 0)).toThrow(
			/nonlinearity.eta must be a finite number/
		);
	});
});
