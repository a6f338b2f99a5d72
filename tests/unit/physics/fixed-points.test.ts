// Fixed points of the rotating-frame flow against closed forms derived in the comments below.
import { describe, expect, it } from 'vitest';
import { fixedPoints, type FixedPoint } from '$lib/physics/fixed-points';
import { vectorField, type ModelParams } from '$lib/physics/model';

const kerr = (order: 2 | 3 | 4, detuning: number, damping: number, drive: number, K: number): ModelParams => ({
	order,
	detuning,
	damping,
	drive,
	nonlinearity: { kind: 'kerr', K }
});
const junction = (order: 2 | 3 | 4, detuning: number, damping: number, drive: number, eta: number): ModelParams => ({
	order,
	detuning,
	damping,
	drive,
	nonlinearity: { kind: 'junction', eta }
});

const ofKind = (pts: FixedPoint[], kind: FixedPoint['kind']) => pts.filter((p) => p.kind === kind);
/** Angle difference folded into (−π, π]. */
const angleDiff = (a: number, b: number) => {
	let d = (a - b) % (2 * Math.PI);
	if (d > Math.PI) d -= 2 * Math.PI;
	if (d <= -Math.PI) d += 2 * Math.PI;
	return d;
};
/** Distance of an angle from the nearest multiple of `step` after removing `offset`. */
const offLattice = (angle: number, offset: number, step: number) => {
	const u = (angle - offset) / step;
	return Math.abs(u - Math.round(u)) * step;
};

/** Root of f on [a, b] by bisection (f(a), f(b) of opposite sign): independent of Newton. */
function bisect(f: (t: number) => number, a: number, b: number): number {
	let fa = f(a);
	for (let i = 0; i < 200; i++) {
		const m = (a + b) / 2;
		const fm = f(m);
		if (fa * fm <= 0) b = m;
		else {
			a = m;
			fa = fm;
		}
	}
	return (a + b) / 2;
}

describe('fixedPoints: general', () => {
	it('returns genuine, distinct roots with the vacuum first and the rest sorted by phase', () => {
		for (const p of [kerr(3, -0.5, 1, 0.4, 0.15), junction(4, 0, 0.01, 1, -0.1), kerr(2, 0.3, 1, 1.5, 0.1)]) {
			const pts = fixedPoints(p);
			expect(pts[0].kind).toBe('vacuum');
			for (const q of pts) expect(Math.hypot(...vectorField(p, q.x, q.y))).toBeLessThan(1e-9);
			for (let i = 2; i < pts.length; i++) expect(pts[i].phase_rad).toBeGreaterThanOrEqual(pts[i - 1].phase_rad);
			for (let i = 0; i < pts.length; i++) {
				for (let j = i + 1; j < pts.length; j++) {
					expect(Math.hypot(pts[i].x - pts[j].x, pts[i].y - pts[j].y)).toBeGreaterThan(1e-6);
				}
			}
		}
	});
});

describe('M = 3 saddles', () => {
	// Fixed point of dα/dt = −i(δα + 3εα*²) − γα (H = δ|α|² + ε(α³ + α*³), K = 0):
	//   (γ + iδ)α = −3iε α*².
	// Moduli: √(γ² + δ²)·r = 3ε r², so r = √(γ² + δ²)/(3ε) (REFERENCES.md, facts of the trade).
	// Phases: with α = r e^{iθ} and γ + iδ = √(γ²+δ²) e^{iφ}, e^{3iθ} = −i e^{−iφ}, i.e.
	//   3θ = −π/2 − φ (mod 2π): three saddles spaced 2π/3.
	it.each([
		[1, 0, 1 / 3],
		[1, 0.5, 0.3],
		[0.2, -1.3, 0.8],
		[2, 2, 0.1]
	])('lie at √(γ²+δ²)/(3ε) with 3θ = −π/2 − φ (γ=%f, δ=%f, ε=%f)', (gamma, delta, eps) => {
		const pts = fixedPoints(kerr(3, delta, gamma, eps, 0));
		const saddles = ofKind(pts, 'saddle');
		expect(saddles).toHaveLength(3);
		expect(ofKind(pts, 'stable')).toHaveLength(0); // no confining term, no phase states
		const r = Math.hypot(gamma, delta) / (3 * eps);
		const phi = Math.atan2(delta, gamma);
		for (const s of saddles) {
			expect(Math.abs(s.r - r) / r).toBeLessThan(1e-9);
			expect(offLattice(3 * s.phase_rad, -Math.PI / 2 - phi, 2 * Math.PI)).toBeLessThan(1e-8);
			expect(s.eigenvalues[0].re * s.eigenvalues[1].re).toBeLessThan(0); // one unstable direction
		}
	});

	// With Kerr, ∂H/∂α* gains 2K|α|²α, so the modulus condition becomes
	//   √(γ² + (δ + 2Kr²)²) = 3ε r,
	// whose smaller root is the saddle and larger root the phase state. Solved here by bisection.
	it('with Kerr match the roots of √(γ² + (δ + 2Kr²)²) = 3εr', () => {
		const [gamma, delta, eps, K] = [1, -0.4, 0.45, 0.2];
		const pts = fixedPoints(kerr(3, delta, gamma, eps, K));
		const g = (r: number) => Math.hypot(gamma, delta + 2 * K * r * r) - 3 * eps * r;
		// g > 0 at 0, < 0 between the roots, > 0 far out; 2.0 lies between them for these numbers.
		expect(g(2)).toBeLessThan(0);
		const rSaddle = bisect(g, 0, 2);
		const rState = bisect(g, 2, 50);
		const saddles = ofKind(pts, 'saddle');
		const states = ofKind(pts, 'stable');
		expect(saddles).toHaveLength(3);
		expect(states).toHaveLength(3);
		for (const s of saddles) expect(s.r).toBeCloseTo(rSaddle, 9);
		for (const s of states) expect(s.r).toBeCloseTo(rState, 9);
	});
});

describe('M = 2 threshold and Kerr amplitude', () => {
	// Linearising about α = 0 with H = δ|α|² + (ε/2)(α² + α*²) (model.ts normalisation; the
	// REFERENCES.md form with F = ε): d/dt(α, α*) = [[−γ−iδ, −iε], [iε, −γ+iδ]](α, α*), trace −2γ,
	// determinant γ² + δ² − ε², eigenvalues −γ ± √(ε² − δ²). The larger one crosses zero when
	// √(ε² − δ²) = γ, i.e. at ε² = γ² + δ² (REFERENCES.md, parametric instability).
	it.each([
		[1, 0],
		[0.5, 0.8],
		[0.2, -1.5]
	])('the vacuum attracts below ε² = γ² + δ² and is a saddle above (γ=%f, δ=%f)', (gamma, delta) => {
		const epsC = Math.hypot(gamma, delta);
		const below = fixedPoints(kerr(2, delta, gamma, 0.98 * epsC, 0.1))[0];
		const above = fixedPoints(kerr(2, delta, gamma, 1.02 * epsC, 0.1))[0];
		expect(below.stability).toBe('attracting');
		expect(above.stability).toBe('saddle');
		for (const [v, eps] of [
			[below, 0.98 * epsC],
			[above, 1.02 * epsC]
		] as const) {
			const disc = eps * eps - delta * delta;
			const lead = disc >= 0 ? -gamma + Math.sqrt(disc) : -gamma;
			expect(v.eigenvalues[0].re).toBeCloseTo(lead, 9);
			if (disc < 0) expect(Math.abs(v.eigenvalues[0].im)).toBeCloseTo(Math.sqrt(-disc), 9);
		}
	});

	// Stationary states with Kerr: ∂H/∂α* = (δ + 2K|α|²)α + εα*, so with Δ = δ + 2Kr² the fixed
	// point obeys (γ + iΔ)α = −iεα*. Moduli: γ² + Δ² = ε², so Δ = ±√(ε² − γ²) and
	//   r² = (±√(ε² − γ²) − δ)/(2K).
	// Above threshold (ε² > γ² + δ², so √(ε² − γ²) > |δ|) only the + sign gives r² > 0 (K > 0):
	// two states, r² = (√(ε² − γ²) − δ)/(2K), at θ and θ + π with e^{2iθ} = −iε/(γ + iΔ) =
	// (−Δ − iγ)/ε, i.e. 2θ = atan2(−γ, −Δ).
	it.each([
		[1, 0, 1.5, 0.1],
		[1, 0.3, 1.5, 0.1],
		[0.3, -0.2, 0.9, 0.5],
		[1, 0.8, 2, 0.05]
	])('above threshold: two states at r² = (√(ε²−γ²) − δ)/(2K) (γ=%f, δ=%f, ε=%f, K=%f)', (gamma, delta, eps, K) => {
		expect(eps * eps).toBeGreaterThan(gamma * gamma + delta * delta);
		const pts = fixedPoints(kerr(2, delta, gamma, eps, K));
		const states = ofKind(pts, 'stable');
		expect(states).toHaveLength(2);
		const root = Math.sqrt(eps * eps - gamma * gamma);
		const r2 = (root - delta) / (2 * K);
		const twoTheta = Math.atan2(-gamma, -root);
		for (const s of states) {
			expect(s.r * s.r).toBeCloseTo(r2, 9);
			expect(offLattice(2 * s.phase_rad, twoTheta, 2 * Math.PI)).toBeLessThan(1e-8);
		}
		expect(Math.abs(Math.abs(angleDiff(states[0].phase_rad, states[1].phase_rad)) - Math.PI)).toBeLessThan(1e-9);
	});

	// Below threshold with δ < −√(ε² − γ²) (and ε > γ) both signs give r² > 0: the vacuum stays
	// stable and coexists with the two states (the + root) and two saddles (the − root).
	it('below threshold, far red-detuned: vacuum, two states and two saddles', () => {
		const [gamma, delta, eps, K] = [1, -1.5, 1.2, 0.1];
		const pts = fixedPoints(kerr(2, delta, gamma, eps, K));
		const root = Math.sqrt(eps * eps - gamma * gamma);
		expect(pts[0].stability).toBe('attracting');
		const states = ofKind(pts, 'stable');
		const saddles = ofKind(pts, 'saddle');
		expect(states).toHaveLength(2);
		expect(saddles).toHaveLength(2);
		for (const s of states) expect(s.r * s.r).toBeCloseTo((root - delta) / (2 * K), 9);
		for (const s of saddles) expect(s.r * s.r).toBeCloseTo((-root - delta) / (2 * K), 9);
	});
});

describe('number of phase states', () => {
	// Facts of the trade (REFERENCES.md): M stable states spaced 2π/M for Kerr; 2M for the junction type.
	it.each([
		[kerr(2, 0, 1, 1.5, 0.1), 2],
		[kerr(3, 0, 1, 1 / 3, 0.157), 3],
		[kerr(3, -0.5, 1, 0.4, 0.15), 3],
		[kerr(4, -1, 0.1, 0.2, 0.5), 4]
	] as const)('Kerr: M states spaced 2π/M (%#)', (p, M) => {
		const states = ofKind(fixedPoints(p), 'stable');
		expect(states).toHaveLength(M);
		for (let i = 1; i < M; i++) expect(states[i].phase_rad - states[i - 1].phase_rad).toBeCloseTo((2 * Math.PI) / M, 9);
		for (const s of states) expect(s.r).toBeCloseTo(states[0].r, 9);
	});

	it.each([
		[junction(2, 0, 0.2, 1, -0.1), 2],
		[junction(3, 0, 0.3, 1, -0.1), 3],
		[junction(4, 0, 0.01, 1, -0.1), 4]
	] as const)('junction: 2M states (%#)', (p, M) => {
		expect(ofKind(fixedPoints(p), 'stable')).toHaveLength(2 * M);
	});
});

describe('junction-type states at δ = 0', () => {
	// With γ = δ = 0, H = 2g r^M (ε + ηr²) cos Mθ. Its extrema (the phase states once a little
	// damping is added) need sin Mθ = 0 and ∂_r[r^M(ε + ηr²)] = Mεr^{M−1} + (M+2)ηr^{M+1} = 0:
	//   r² = −Mε/((M+2)η)   (η < 0 for ε > 0), at θ = kπ/M,
	// 2M states at one radius: the maxima of H at even k, the minima at odd k.
	it.each([2, 3, 4] as const)('approach r² = −Mε/((M+2)η) at θ = kπ/M as γ → 0 (M = %i)', (M) => {
		const [eps, eta] = [1, -0.1];
		const r0 = Math.sqrt((-M * eps) / ((M + 2) * eta));
		let prevErr = Infinity;
		for (const gamma of [1e-2, 1e-3, 1e-4]) {
			const states = ofKind(fixedPoints(junction(M, 0, gamma, eps, eta)), 'stable');
			expect(states).toHaveLength(2 * M);
			const err = Math.max(...states.map((s) => Math.max(Math.abs(s.r - r0) / r0, offLattice(s.phase_rad, 0, Math.PI / M))));
			expect(err).toBeLessThan(prevErr); // converging as γ → 0
			prevErr = err;
		}
		expect(prevErr).toBeLessThan(1e-3);
	});

	// At δ = 0 (and K = 0) the flow is symmetric under α → e^{iπ/M} α*: conjugation turns the flow
	// of H into that of −H (keeping the damping), and the rotation by π/M turns −H back into H. The
	// map preserves |α| and exchanges the two families, so all 2M states stay equidistant from the
	// vacuum at any damping. Detuning breaks the symmetry (δ|α|² does not change sign).
	it('stay equidistant at finite γ when δ = 0, and split into two radii when δ ≠ 0', () => {
		const sym = ofKind(fixedPoints(junction(3, 0, 0.3, 1, -0.1)), 'stable');
		expect(sym).toHaveLength(6);
		for (const s of sym) expect(s.r).toBeCloseTo(sym[0].r, 9);
		const asym = ofKind(fixedPoints(junction(3, 0.3, 0.3, 1, -0.1)), 'stable');
		expect(asym).toHaveLength(6);
		const radii = asym.map((s) => s.r);
		expect(Math.max(...radii) - Math.min(...radii)).toBeGreaterThan(0.05);
	});
});
