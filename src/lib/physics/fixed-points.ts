// Fixed points of the rotating-frame flow (vacuum, saddles, phase states), found numerically by
// Newton's method from seeds spread over the plane and classified by their Jacobian eigenvalues.
import { jacobian, makeDrift, modelCoefficients, type ModelParams } from './model';

export interface Complex {
	re: number;
	im: number;
}

export type FixedPointKind = 'vacuum' | 'saddle' | 'stable' | 'unstable';

export interface FixedPoint {
	x: number;
	y: number;
	r: number;
	/** Phase of α in [0, 2π); 0 for the vacuum. */
	phase_rad: number;
	/** 'vacuum' for α = 0 whatever its stability (see `stability`). */
	kind: FixedPointKind;
	/**
	 * Linear stability, for the vacuum too. 'neutral' is a centre (purely imaginary pair), which
	 * only happens at γ = 0; such points count as kind 'stable'.
	 */
	stability: 'attracting' | 'saddle' | 'repelling' | 'neutral';
	eigenvalues: [Complex, Complex];
}

export interface FixedPointOptions {
	/** Rings of seeds (geometrically spaced radii). Default 36. */
	rings?: number;
	/** Seeds per ring, per phase state. Default 12 (so 12·M or 24·M per ring). */
	seedsPerState?: number;
}

/** Eigenvalues of a real 2×2 matrix, the one with the larger real part (then imaginary) first. */
export function eigenvalues2(m: [[number, number], [number, number]]): [Complex, Complex] {
	const tr = m[0][0] + m[1][1];
	const det = m[0][0] * m[1][1] - m[0][1] * m[1][0];
	const half = tr / 2;
	const disc = half * half - det;
	if (disc >= 0) {
		const s = Math.sqrt(disc);
		return [
			{ re: half + s, im: 0 },
			{ re: half - s, im: 0 }
		];
	}
	const s = Math.sqrt(-disc);
	return [
		{ re: half, im: s },
		{ re: half, im: -s }
	];
}

/**
 * Radii at which pairs of terms of the vector field balance: the damping/detuning term
 * √(γ²+δ²)r, the drive g·M·ε·r^{M−1}, the Kerr term 2|K|r³ and the junction term ≈ g|η|(M+2)r^{M+1}.
 * Fixed points away from the vacuum sit where at least two of them cancel, so these radii bound
 * the region worth seeding.
 */
export function balanceRadii(params: ModelParams): number[] {
	const { M, g, gamma, delta, eps, eta, K } = modelCoefficients(params);
	// term_i(r) = c_i r^{p_i}
	const terms: Array<[number, number]> = [
		[Math.hypot(gamma, delta), 1],
		[g * M * eps, M - 1],
		[2 * Math.abs(K), 3],
		[g * Math.abs(eta) * (M + 2), M + 1]
	].filter(([c]) => c > 0) as Array<[number, number]>;
	const radii: number[] = [];
	for (let i = 0; i < terms.length; i++) {
		for (let j = i + 1; j < terms.length; j++) {
			const [ci, pi] = terms[i];
			const [cj, pj] = terms[j];
			if (pi === pj) continue;
			const r = Math.pow(ci / cj, 1 / (pj - pi));
			if (Number.isFinite(r) && r > 0) radii.push(r);
		}
	}
	return radii;
}

function phaseOf(x: number, y: number): number {
	const p = Math.atan2(y, x);
	return p < 0 ? p + 2 * Math.PI : p;
}

function classify(params: ModelParams, x: number, y: number, rateScale: number) {
	const J = jacobian(params, x, y);
	const ev = eigenvalues2(J);
	const tr = J[0][0] + J[1][1];
	const det = J[0][0] * J[1][1] - J[0][1] * J[1][0];
	const tol = 1e-9 * rateScale;
	let stability: FixedPoint['stability'];
	if (det < -tol * tol) stability = 'saddle';
	else if (tr < -tol) stability = 'attracting';
	else if (tr > tol) stability = 'repelling';
	else stability = 'neutral';
	return { ev, stability };
}

/**
 * All fixed points of the flow, the vacuum first, then the others sorted by phase (then radius).
 * Newton's method (with step halving on the residual) runs from seeds on rings between a tenth
 * of the smallest and three times the largest balance radius; converged points are merged when
 * closer than 1e-7 of the outer radius.
 */
export function fixedPoints(params: ModelParams, options: FixedPointOptions = {}): FixedPoint[] {
	const c = modelCoefficients(params);
	const rings = options.rings ?? 36;
	const perState = options.seedsPerState ?? 12;
	if (!Number.isInteger(rings) || rings < 1) throw new RangeError(`rings must be a positive integer, got ${rings}`);
	if (!Number.isInteger(perState) || perState < 1) {
		throw new RangeError(`seedsPerState must be a positive integer, got ${perState}`);
	}
	const drift = makeDrift(params);
	const radii = balanceRadii(params);
	const rOuter = radii.length ? 3 * Math.max(...radii) : 1;
	const rInner = radii.length ? Math.min(...radii) / 10 : 1e-3;
	const rateScale = Math.max(Math.hypot(c.gamma, c.delta), c.eps, Math.abs(c.K), Math.abs(c.eta), 1e-300);
	const nAngles = perState * (params.nonlinearity.kind === 'junction' ? 2 : 1) * c.M;

	const found: Array<{ x: number; y: number }> = [{ x: 0, y: 0 }];
	const f = new Float64Array(2);
	const mergeDist = 1e-7 * rOuter;

	const residual = (x: number, y: number) => {
		drift(x, y, f);
		return Math.hypot(f[0], f[1]);
	};

	for (let ring = 0; ring < rings; ring++) {
		const r = rings === 1 ? rOuter : rInner * Math.pow(rOuter / rInner, ring / (rings - 1));
		const offset = (ring * 0.618034 * 2 * Math.PI) / nAngles; // stagger the rings
		for (let k = 0; k < nAngles; k++) {
			const th = offset + (2 * Math.PI * k) / nAngles;
			let x = r * Math.cos(th);
			let y = r * Math.sin(th);
			let res = residual(x, y);
			for (let it = 0; it < 80 && Number.isFinite(res); it++) {
				const J = jacobian(params, x, y);
				const det = J[0][0] * J[1][1] - J[0][1] * J[1][0];
				if (det === 0 || !Number.isFinite(det)) break;
				drift(x, y, f);
				const dx = -(J[1][1] * f[0] - J[0][1] * f[1]) / det;
				const dy = -(-J[1][0] * f[0] + J[0][0] * f[1]) / det;
				let step = 1;
				let nx = x + dx;
				let ny = y + dy;
				let nres = residual(nx, ny);
				while (!(nres < res) && step > 1e-4) {
					step /= 2;
					nx = x + step * dx;
					ny = y + step * dy;
					nres = residual(nx, ny);
				}
				if (!(nres < res)) break; // no descent left: converged or stuck
				const moved = Math.hypot(nx - x, ny - y);
				x = nx;
				y = ny;
				res = nres;
				if (moved <= 1e-14 * Math.max(Math.hypot(x, y), rInner)) break;
				if (Math.hypot(x, y) > 10 * rOuter) break;
			}
			// The residual scales like rate × radius; accept only a genuine root.
			if (!(res <= 1e-10 * rateScale * Math.max(Math.hypot(x, y), rInner))) continue;
			if (found.some((p) => Math.hypot(p.x - x, p.y - y) < mergeDist)) continue;
			if (Math.hypot(x, y) < mergeDist) continue;
			found.push({ x, y });
		}
	}

	const points: FixedPoint[] = found.map(({ x, y }, i) => {
		const { ev, stability } = classify(params, x, y, rateScale);
		const isVacuum = i === 0;
		const kind: FixedPointKind = isVacuum
			? 'vacuum'
			: stability === 'saddle'
				? 'saddle'
				: stability === 'repelling'
					? 'unstable'
					: 'stable';
		return {
			x: isVacuum ? 0 : x,
			y: isVacuum ? 0 : y,
			r: isVacuum ? 0 : Math.hypot(x, y),
			phase_rad: isVacuum ? 0 : phaseOf(x, y),
			kind,
			stability,
			eigenvalues: ev
		};
	});
	const [vacuum, ...rest] = points;
	rest.sort((a, b) => a.phase_rad - b.phase_rad || a.r - b.r);
	return [vacuum, ...rest];
}

/** The stable fixed points other than the vacuum: the phase states, sorted by phase. */
export function phaseStates(points: FixedPoint[]): FixedPoint[] {
	return points.filter((p) => p.kind === 'stable');
}

/** True when the vacuum attracts (both eigenvalues with negative real part). */
export function vacuumIsStable(points: FixedPoint[]): boolean {
	const v = points.find((p) => p.kind === 'vacuum');
	return v !== undefined && v.stability === 'attracting';
}
