// A λ sweep of the escape or switching rate (ln W against 1/λ), one seeded stream per point.
import { type EscapeOptions, type EscapeResult, escapeRateRun } from './langevin-escape';
import { type RateInterval, type Run, positive, runToCompletion, scaled } from './langevin-run';
import { type SwitchingOptions, type SwitchingResult, switchingRateRun } from './langevin-switching';
import type { ModelParams } from './model';
import { deriveSeed } from './random';

export type SweepOptions =
	| ({ estimator?: 'escape'; lambdas: number[] } & Omit<EscapeOptions, 'lambda'>)
	| ({ estimator: 'switching'; lambdas: number[] } & Omit<SwitchingOptions, 'lambda'>);

export interface SweepPoint {
	lambda: number;
	inverseLambda: number;
	/** rate = count / exposure, the form activation.ts's fitFromSimulation takes. */
	rate: number;
	count: number;
	exposure: number;
	lnRate: number;
	interval: RateInterval;
	result: EscapeResult | SwitchingResult;
}

export interface SweepResult {
	estimator: 'escape' | 'switching';
	points: SweepPoint[];
}

/** The escape (or switching) estimate at each λ, each with its own derived seed. */
export function* sweepRun(params: ModelParams, options: SweepOptions): Run<SweepResult> {
	const lambdas = options.lambdas;
	if (!Array.isArray(lambdas) || lambdas.length === 0) throw new RangeError('lambdas must be a non-empty array');
	lambdas.forEach((l, i) => positive(`lambdas[${i}]`, l));
	const estimator = options.estimator ?? 'escape';
	const points: SweepPoint[] = [];
	for (let i = 0; i < lambdas.length; i++) {
		const lambda = lambdas[i];
		const seed = deriveSeed(options.seed, 1_000_003 + i);
		const at = i / lambdas.length;
		const width = 1 / lambdas.length;
		if (options.estimator === 'switching') {
			const o: SwitchingOptions = { ...options, lambda, seed };
			const r = yield* scaled(switchingRateRun(params, o), at, width);
			points.push(point(lambda, r.switches, r.exposure, r.interval, r));
		} else {
			const o: EscapeOptions = { ...options, lambda, seed };
			const r = yield* scaled(escapeRateRun(params, o), at, width);
			points.push(point(lambda, r.escapes, r.exposure, r.interval, r));
		}
	}
	return { estimator, points };
}

/** Blocking form of sweepRun. */
export function sweepRates(params: ModelParams, options: SweepOptions): SweepResult {
	return runToCompletion(sweepRun(params, options), options);
}

function point(lambda: number, n: number, exposure: number, interval: RateInterval, result: EscapeResult | SwitchingResult): SweepPoint {
	const rate = n / exposure;
	return { lambda, inverseLambda: 1 / lambda, rate, count: n, exposure, lnRate: Math.log(rate), interval, result };
}
