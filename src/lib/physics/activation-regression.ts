// The regressions behind the activation fit: ln W against a covariate by weighted least squares
// on ln(count/exposure), or by Poisson maximum likelihood when counts are small.
import { type FitMethod, type GoodnessOfFit, MIN_COUNT_FOR_WLS } from './activation-model';
import jStat from 'jstat';

export function fmt(value: number): string {
	return Number(value.toPrecision(3)).toString();
}

type LogLinearFit = {
	lnW0: number;
	A: number;
	var_lnW0: number;
	var_A: number;
	cov: number;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
};

export function pValue(value: number, dof: number): number | null {
	return dof > 0 ? 1 - jStat.chisquare.cdf(value, dof) : null;
}

function span(values: number[]): number {
	return values.length === 0 ? 0 : Math.max(...values) - Math.min(...values);
}

function hasTwoDistinct(values: number[]): boolean {
	const scale = Math.max(1, ...values.map(Math.abs));
	return span(values) > 1e-9 * scale;
}

/**
 * Fits ln μ_i = ln exposure_i + ln W0 − A·x_i to counts. xLabel names x in error messages.
 * Both paths work with x centred on its count-weighted mean, where the intercept and slope are
 * (nearly) uncorrelated, and transform back to ln W0 at x = 0.
 */
export function fitLogLinear(x: number[], count: number[], exposure: number[], xLabel: string): LogLinearFit {
	const total = count.reduce((a, b) => a + b, 0);
	if (total === 0) throw new RangeError('all counts are zero: the rate cannot be fitted');
	if (!hasTwoDistinct(x)) {
		throw new RangeError(`the points span a single value of ${xLabel}: W0 and A cannot both be determined`);
	}
	if (!hasTwoDistinct(x.filter((_, i) => count[i] > 0))) {
		// With events at one x only, the likelihood keeps rising as the slope runs off to infinity.
		throw new RangeError(`counts are non-zero at a single value of ${xLabel}: W0 and A cannot both be determined`);
	}
	const xBar = x.reduce((acc, xi, i) => acc + xi * count[i], 0) / total;
	const u = x.map((xi) => xi - xBar);
	const fit = count.every((c) => c >= MIN_COUNT_FOR_WLS)
		? weightedLeastSquares(u, count, exposure)
		: poissonMaximumLikelihood(u, count, exposure);
	// Intercept at x = 0: ln W0 = c − b·x̄, and A = −b.
	const { c, b, vc, vb, cbc } = fit;
	return {
		lnW0: c - b * xBar,
		A: -b,
		var_lnW0: vc + xBar * xBar * vb - 2 * xBar * cbc,
		var_A: vb,
		cov: -(cbc - xBar * vb),
		method: fit.method,
		goodnessOfFit: fit.goodnessOfFit
	};
}

type CentredFit = {
	c: number;
	b: number;
	vc: number;
	vb: number;
	cbc: number;
	method: FitMethod;
	goodnessOfFit: GoodnessOfFit;
};

/** ln(count/exposure) on u with weights = counts (var ln N ≈ 1/N); variances taken as known. */
function weightedLeastSquares(u: number[], count: number[], exposure: number[]): CentredFit {
	const y = count.map((n, i) => Math.log(n / exposure[i]));
	const sw = count.reduce((a, b) => a + b, 0);
	const swu = u.reduce((acc, ui, i) => acc + count[i] * ui, 0);
	const swy = y.reduce((acc, yi, i) => acc + count[i] * yi, 0);
	const suu = u.reduce((acc, ui, i) => acc + count[i] * ui * ui, 0);
	const suy = u.reduce((acc, ui, i) => acc + count[i] * ui * y[i], 0);
	const det = sw * suu - swu * swu;
	const c = (suu * swy - swu * suy) / det;
	const b = (sw * suy - swu * swy) / det;
	const chi2 = y.reduce((acc, yi, i) => acc + count[i] * (yi - c - b * u[i]) ** 2, 0);
	const dof = y.length - 2;
	return {
		c,
		b,
		vc: suu / det,
		vb: sw / det,
		cbc: -swu / det,
		method: 'wls',
		goodnessOfFit: { statistic: 'chi-square', value: chi2, dof, pValue: pValue(chi2, dof) }
	};
}

/**
 * Poisson maximum likelihood by Newton's method (for the log link the observed and expected
 * information coincide, so this is also IRLS), with step halving so the likelihood never falls.
 * Covariance from the inverse Fisher information at the optimum.
 */
function poissonMaximumLikelihood(u: number[], count: number[], exposure: number[]): CentredFit {
	const lnE = exposure.map(Math.log);
	const n = u.length;
	const state = (c: number, b: number) => {
		let logLik = 0;
		let g0 = 0;
		let g1 = 0;
		let i00 = 0;
		let i01 = 0;
		let i11 = 0;
		for (let i = 0; i < n; i++) {
			const eta = lnE[i] + c + b * u[i];
			const mu = Math.exp(eta);
			logLik += count[i] * eta - mu;
			g0 += count[i] - mu;
			g1 += u[i] * (count[i] - mu);
			i00 += mu;
			i01 += mu * u[i];
			i11 += mu * u[i] * u[i];
		}
		return { logLik, g0, g1, i00, i01, i11 };
	};

	// Start from least squares on ln((N + ½)/E), which exists even where N = 0.
	const start = weightedLeastSquares(
		u,
		count.map((k) => k + 0.5),
		exposure
	);
	let c = start.c;
	let b = start.b;
	let s = state(c, b);
	const uSpan = Math.max(span(u), 1e-300);
	let converged = false;
	for (let iter = 0; iter < 200 && !converged; iter++) {
		const det = s.i00 * s.i11 - s.i01 * s.i01;
		const dc = (s.i11 * s.g0 - s.i01 * s.g1) / det;
		const db = (s.i00 * s.g1 - s.i01 * s.g0) / det;
		let t = 1;
		let next = state(c + dc, b + db);
		while (!(next.logLik >= s.logLik - 1e-12 * Math.abs(s.logLik)) && t > 1e-12) {
			t /= 2;
			next = state(c + t * dc, b + t * db);
		}
		c += t * dc;
		b += t * db;
		s = next;
		converged = Math.abs(t * dc) + Math.abs(t * db) * uSpan < 1e-11;
	}
	if (!converged || !Number.isFinite(c) || !Number.isFinite(b)) {
		throw new Error('the Poisson likelihood fit did not converge');
	}
	const det = s.i00 * s.i11 - s.i01 * s.i01;
	let deviance = 0;
	for (let i = 0; i < n; i++) {
		const mu = Math.exp(lnE[i] + c + b * u[i]);
		const k = count[i];
		deviance += 2 * ((k > 0 ? k * Math.log(k / mu) : 0) - (k - mu));
	}
	const dof = n - 2;
	return {
		c,
		b,
		vc: s.i11 / det,
		vb: s.i00 / det,
		cbc: -s.i01 / det,
		method: 'poisson-ml',
		goodnessOfFit: { statistic: 'deviance', value: deviance, dof, pValue: pValue(deviance, dof) }
	};
}
