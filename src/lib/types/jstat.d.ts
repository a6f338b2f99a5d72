// Type declarations for the parts of jstat (which ships no types) that Phasewarden uses.
declare module 'jstat' {
	interface ContinuousDistribution<P extends unknown[]> {
		pdf(x: number, ...params: P): number;
		cdf(x: number, ...params: P): number;
		inv(p: number, ...params: P): number;
		mean(...params: P): number;
		variance(...params: P): number;
	}

	interface DiscreteDistribution<P extends unknown[]> {
		pdf(k: number, ...params: P): number;
		cdf(k: number, ...params: P): number;
	}

	interface JStatStatic {
		/** Regularized lower incomplete gamma function P(a, x). */
		lowRegGamma(a: number, x: number): number;
		/** Inverse of the regularized lower incomplete gamma function in x. */
		gammapinv(p: number, a: number): number;
		/** ln Γ(x). */
		gammaln(x: number): number;
		/** Regularized incomplete beta function I_x(a, b). */
		ibeta(x: number, a: number, b: number): number;
		/** Inverse of I_x(a, b) in x. */
		ibetainv(p: number, a: number, b: number): number;
		erf(x: number): number;
		erfc(x: number): number;
		normal: ContinuousDistribution<[mean: number, std: number]>;
		chisquare: ContinuousDistribution<[dof: number]>;
		gamma: ContinuousDistribution<[shape: number, scale: number]>;
		beta: ContinuousDistribution<[alpha: number, beta: number]>;
		studentt: ContinuousDistribution<[dof: number]>;
		centralF: ContinuousDistribution<[df1: number, df2: number]>;
		binomial: DiscreteDistribution<[n: number, p: number]>;
		poisson: DiscreteDistribution<[lambda: number]>;
	}

	const jStat: JStatStatic;
	export default jStat;
	export { jStat };
}
