// Rotating-frame model of a resonator driven at M times its frequency (M = 2, 3, 4): the
// Hamiltonian, the deterministic vector field and its Jacobian on the slow amplitude α = x + iy.
//
// Normalisation (every physics module uses this one):
//
//   H(α, α*) = δ|α|² + g_M (ε + η|α|²)(α^M + α*^M) + K|α|⁴
//   dα/dt   = −i ∂H/∂α* − γα
//
// with δ the detuning, γ the amplitude damping rate, ε the M-photon drive, K the Kerr
// coefficient and η the next-order (junction-type) drive term, all in the same rate unit, and
// time in its inverse. α is the dimensionless amplitude scaled so that α = (Q + iP)/√2 for
// rotating-frame quadratures Q, P obeying Hamilton's equations dQ/dt = ∂H/∂P, dP/dt = −∂H/∂Q
// (plus damping); in the quantum problem [α, α†] = λ, the fluctuation parameter of langevin.ts.
//
// The drive weight g_M is 1 for M = 3, 4 and 1/2 for M = 2. For M = 2 the drive term is then
// (ε/2)(α² + α*²), the usual parametric-amplifier form H = δ|a|² + (F/2)(a² + a*²) with F = ε:
// the linearised motion about the vacuum has eigenvalues −γ ± √(ε² − δ²), so the vacuum loses
// stability at ε² = γ² + δ², the threshold as usually stated. (With weight 1 the threshold
// would read 4ε² = γ² + δ².) For M = 3 the weight 1 gives H = δ|α|² + ε(α³ + α*³), whose saddles
// around the vacuum lie at |α| = √(γ² + δ²)/(3ε). The weight multiplies the η term as well, so
// the M-photon coefficient ε + η|α|² changes sign at |α|² = −ε/η for every M.
//
// Nonlinearity: 'kerr' keeps K and sets η = 0, giving M phase states spaced 2π/M. 'junction'
// keeps η (with an optional K, default 0): the sign change of the M-photon coefficient gives
// 2M phase states. Without K the junction model is not confined (H is unbounded in both
// directions), so far from the phase states trajectories can run off; the simulator watches
// for that.

export type DriveOrder = 2 | 3 | 4;

export type Nonlinearity = { kind: 'kerr'; K: number } | { kind: 'junction'; eta: number; K?: number };

export interface ModelParams {
	/** M: the drive is at M times the resonator frequency. */
	order: DriveOrder;
	/** δ: detuning of the resonator from drive/M, in the model's rate unit. */
	detuning: number;
	/** γ: amplitude damping rate (≥ 0). */
	damping: number;
	/** ε: M-photon drive amplitude (≥ 0). */
	drive: number;
	nonlinearity: Nonlinearity;
}

export type Matrix2 = [[number, number], [number, number]];

/** The numbers the formulas use, checked once. */
export interface ModelCoefficients {
	M: DriveOrder;
	g: number;
	gamma: number;
	delta: number;
	eps: number;
	eta: number;
	K: number;
}

function finite(name: string, value: unknown): number {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw new RangeError(`${name} must be a finite number, got ${String(value)}`);
	}
	return value;
}

/** The drive weight g_M of the normalisation above. */
export function driveWeight(order: DriveOrder): number {
	return order === 2 ? 0.5 : 1;
}

/** Checks the parameters and returns the coefficients; throws a RangeError naming the problem. */
export function modelCoefficients(params: ModelParams): ModelCoefficients {
	if (params === null || typeof params !== 'object') {
		throw new RangeError('model parameters must be an object');
	}
	const M = params.order;
	if (M !== 2 && M !== 3 && M !== 4) {
		throw new RangeError(`order (M) must be 2, 3 or 4, got ${String(M)}`);
	}
	const delta = finite('detuning', params.detuning);
	const gamma = finite('damping', params.damping);
	if (gamma < 0) throw new RangeError(`damping must be ≥ 0, got ${gamma}`);
	const eps = finite('drive', params.drive);
	if (eps < 0) throw new RangeError(`drive must be ≥ 0 (its phase sets the phase origin), got ${eps}`);
	const nl = params.nonlinearity;
	if (nl === null || typeof nl !== 'object') {
		throw new RangeError("nonlinearity must be { kind: 'kerr', K } or { kind: 'junction', eta }");
	}
	let K: number;
	let eta: number;
	if (nl.kind === 'kerr') {
		K = finite('nonlinearity.K', nl.K);
		eta = 0;
	} else if (nl.kind === 'junction') {
		eta = finite('nonlinearity.eta', nl.eta);
		K = nl.K === undefined ? 0 : finite('nonlinearity.K', nl.K);
	} else {
		throw new RangeError(`nonlinearity.kind must be 'kerr' or 'junction', got ${String((nl as { kind?: unknown }).kind)}`);
	}
	return { M, g: driveWeight(M), gamma, delta, eps, eta, K };
}

/** Number of phase states the nonlinearity supports: M for Kerr, 2M for the junction term. */
export function phaseStateCount(params: ModelParams): number {
	const c = modelCoefficients(params);
	return params.nonlinearity.kind === 'junction' ? 2 * c.M : c.M;
}

/** Re and Im of α*^n for α = x + iy, n = 0…5. */
function conjPower(x: number, y: number, n: number): [number, number] {
	let re = 1;
	let im = 0;
	for (let k = 0; k < n; k++) {
		const nr = re * x + im * y; // (re + i im)(x − i y)
		im = im * x - re * y;
		re = nr;
	}
	return [re, im];
}

/** H(α, α*) at α = x + iy. */
export function hamiltonian(params: ModelParams, x: number, y: number): number {
	const c = modelCoefficients(params);
	const r2 = x * x + y * y;
	const [pr] = conjPower(x, y, c.M); // Re α*^M = Re α^M
	return c.delta * r2 + c.g * (c.eps + c.eta * r2) * 2 * pr + c.K * r2 * r2;
}

/**
 * The drift F(α) = −i ∂H/∂α* − γα, written into out = [dx/dt, dy/dt]. With
 * ∂H/∂α* = (δ + 2K|α|²)α + g[Mε + (M+1)η|α|²]α*^{M−1} + gη α^{M+1}.
 * Allocation-free: the simulators call it in their inner loop.
 */
export function makeDrift(params: ModelParams): (x: number, y: number, out: Float64Array) => void {
	const { M, g, gamma, delta, eps, eta, K } = modelCoefficients(params);
	const gMe = g * M * eps;
	const gM1eta = g * (M + 1) * eta;
	const geta = g * eta;
	const hasEta = eta !== 0;
	return (x, y, out) => {
		const r2 = x * x + y * y;
		// p = α*^{M−1}
		let pr: number;
		let pi: number;
		if (M === 2) {
			pr = x;
			pi = -y;
		} else if (M === 3) {
			pr = x * x - y * y;
			pi = -2 * x * y;
		} else {
			const ar = x * x - y * y;
			const ai = -2 * x * y;
			pr = ar * x + ai * y;
			pi = ai * x - ar * y;
		}
		const lin = delta + 2 * K * r2;
		const cm = gMe + gM1eta * r2;
		let Gr = lin * x + cm * pr;
		let Gi = lin * y + cm * pi;
		if (hasEta) {
			// α^{M+1} = conj(α*^{M−1}) · α²
			const sr = x * x - y * y;
			const si = 2 * x * y;
			Gr += geta * (pr * sr + pi * si);
			Gi += geta * (pr * si - pi * sr);
		}
		// −i G − γα
		out[0] = Gi - gamma * x;
		out[1] = -Gr - gamma * y;
	};
}

/** dα/dt at α = x + iy as [dx/dt, dy/dt]. */
export function vectorField(params: ModelParams, x: number, y: number): [number, number] {
	const out = new Float64Array(2);
	makeDrift(params)(x, y, out);
	return [out[0], out[1]];
}

/**
 * Real Jacobian ∂(dx/dt, dy/dt)/∂(x, y). From the Wirtinger derivatives A = ∂F/∂α and
 * B = ∂F/∂α* of F = −iG − γα: ∂F/∂x = A + B, ∂F/∂y = i(A − B), where
 *   ∂G/∂α  = δ + 4K|α|² + g(M+1)η(α^M + α*^M),
 *   ∂G/∂α* = 2Kα² + g α*^{M−2}[M(M−1)ε + M(M+1)η|α|²].
 */
export function jacobian(params: ModelParams, x: number, y: number): Matrix2 {
	const { M, g, gamma, delta, eps, eta, K } = modelCoefficients(params);
	const r2 = x * x + y * y;
	const [cMr] = conjPower(x, y, M); // Re α*^M; α^M + α*^M = 2 Re α*^M
	const [qr, qi] = conjPower(x, y, M - 2);
	const dGa_r = delta + 4 * K * r2 + g * (M + 1) * eta * 2 * cMr; // real
	const coef = g * (M * (M - 1) * eps + M * (M + 1) * eta * r2);
	const dGb_r = 2 * K * (x * x - y * y) + coef * qr;
	const dGb_i = 2 * K * (2 * x * y) + coef * qi;
	// A = −i ∂G/∂α − γ (∂G/∂α is real), B = −i ∂G/∂α*
	const Ar = -gamma;
	const Ai = -dGa_r;
	const Br = dGb_i;
	const Bi = -dGb_r;
	return [
		[Ar + Br, -(Ai - Bi)],
		[Ai + Bi, Ar - Br]
	];
}
