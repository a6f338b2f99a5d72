// Dense linear solves for the run-length equations (I − R)·L = 1 of Markov-chain and
// integral-equation methods.

/**
 * Solves A·x = b for a dense n×n matrix `a` stored row-major; `a` and `b` are not modified.
 * Returns null when A is singular (for a run-length system: some state never signals).
 *
 * I − R with R substochastic is an M-matrix, for which elimination without pivoting is stable
 * and keeps every pivot positive; it also preserves a narrow lower or upper band, which the
 * Poisson CUSUM chains have, so zero multipliers and the zero tail of each row are skipped.
 * A non-positive pivot means the matrix is not of that kind, and the solve is redone with
 * partial pivoting.
 */
export function solveLinearSystem(a: Float64Array, b: Float64Array, n: number): Float64Array | null {
	if (a.length !== n * n || b.length !== n) {
		throw new RangeError(`solveLinearSystem: expected a ${n}×${n} matrix and ${n} right-hand sides`);
	}
	return solveWithoutPivoting(a, b, n) ?? solveWithPartialPivoting(a, b, n);
}

function maxAbs(a: Float64Array): number {
	let m = 0;
	for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
	return m;
}

function solveWithoutPivoting(a0: Float64Array, b0: Float64Array, n: number): Float64Array | null {
	const a = Float64Array.from(a0);
	const x = Float64Array.from(b0);
	const tiny = 1e-14 * maxAbs(a0);
	// rowEnd[r]: one past the last nonzero column of row r (grows with fill-in).
	const rowEnd = new Int32Array(n);
	for (let r = 0; r < n; r++) {
		let end = 0;
		for (let c = n - 1; c >= 0; c--) {
			if (a[r * n + c] !== 0) {
				end = c + 1;
				break;
			}
		}
		rowEnd[r] = end;
	}
	for (let c = 0; c < n; c++) {
		const pivot = a[c * n + c];
		if (!(pivot > tiny)) return null;
		const end = rowEnd[c];
		for (let r = c + 1; r < n; r++) {
			const arc = a[r * n + c];
			if (arc === 0) continue;
			const f = arc / pivot;
			a[r * n + c] = 0;
			const ro = r * n;
			const co = c * n;
			for (let j = c + 1; j < end; j++) a[ro + j] -= f * a[co + j];
			if (end > rowEnd[r]) rowEnd[r] = end;
			x[r] -= f * x[c];
		}
	}
	return backSubstitute(a, x, n, rowEnd);
}

function solveWithPartialPivoting(a0: Float64Array, b0: Float64Array, n: number): Float64Array | null {
	const a = Float64Array.from(a0);
	const x = Float64Array.from(b0);
	const tiny = 1e-14 * maxAbs(a0);
	for (let c = 0; c < n; c++) {
		let p = c;
		for (let r = c + 1; r < n; r++) if (Math.abs(a[r * n + c]) > Math.abs(a[p * n + c])) p = r;
		if (!(Math.abs(a[p * n + c]) > tiny)) return null;
		if (p !== c) {
			for (let j = 0; j < n; j++) {
				const t = a[c * n + j];
				a[c * n + j] = a[p * n + j];
				a[p * n + j] = t;
			}
			const t = x[c];
			x[c] = x[p];
			x[p] = t;
		}
		const pivot = a[c * n + c];
		for (let r = c + 1; r < n; r++) {
			const f = a[r * n + c] / pivot;
			if (f === 0) continue;
			a[r * n + c] = 0;
			for (let j = c + 1; j < n; j++) a[r * n + j] -= f * a[c * n + j];
			x[r] -= f * x[c];
		}
	}
	return backSubstitute(a, x, n, null);
}

function backSubstitute(a: Float64Array, x: Float64Array, n: number, rowEnd: Int32Array | null): Float64Array {
	for (let r = n - 1; r >= 0; r--) {
		let s = x[r];
		const end = rowEnd ? rowEnd[r] : n;
		for (let j = r + 1; j < end; j++) s -= a[r * n + j] * x[j];
		x[r] = s / a[r * n + r];
	}
	return x;
}
