// From a λ sweep to a rate model in real units, and from a rate model to the curves the planner
// draws: the unit conventions of the rate planner live here, in one place.
//
// Units. The model's rates (δ, γ, ε, K, η) are entered in one rate unit u (planner-inputs.ts), so
// its time unit is 1/u and a simulated rate W_sim (per model time) is W_sim·u in s⁻¹.
//
// Exponent. The simulator's noise is D = γ·λ·(2n̄+1) (langevin.ts), so λ and the noise factor
// enter only as the product λ(2n̄+1). A sweep at 2n̄+1 = 1 over several λ gives
// ln W = ln W0 − R/λ; at the device's own λ_q and a temperature T the same law reads
// W = W0·exp(−(R/λ_q)/(2n̄(f,T)+1)), which is the monitor's W0·exp(−A/(2n̄+1)) with A = R/λ_q.
import { predictRate, type RateModel, type RatePrediction, type SimulatedRate, type SimulationFit } from '$lib/physics/activation';
import { MK_PER_GHZ } from '$lib/physics/constants';
import type { ModelParams } from '$lib/physics/model';
import type { SweepResult, SwitchingResult } from '$lib/physics/langevin';

/**
 * The counts and exposures that match what the agent reports: escapes over time in the vacuum
 * (vacuum_s), and switches between phase states over time spent in phase states (dwell_s).
 * The sweep's own switching count also includes transitions to and from the vacuum; the
 * phase-to-phase count is what the monitor's switching rate counts.
 */
export function simulatedRates(sweep: SweepResult): SimulatedRate[] {
	return sweep.points.map((p) => {
		if (sweep.estimator === 'escape') {
			return { lambda: p.lambda, rate: p.count / p.exposure, count: p.count, exposure: p.exposure };
		}
		const r = p.result as SwitchingResult;
		const inPhase = r.occupancyTime.reduce((acc, t, k) => acc + (r.states[k].isVacuum ? 0 : t), 0);
		const count = r.phaseSwitches.count;
		// A run that never left the vacuum has no phase-state time; its total time stands in, and
		// with zero switches the point still bounds the rate from above.
		const exposure = inPhase > 0 ? inPhase : r.exposure;
		return { lambda: p.lambda, rate: count / exposure, count, exposure };
	});
}

export interface PlannerModelContext {
	process: 'escape' | 'switching';
	params: ModelParams;
	/** One model rate unit in s⁻¹. */
	unit_per_s: number;
	lambdaQ: number;
	mode_GHz: number;
	nominal_mK: number;
}

/**
 * The monitor's rate model from a simulation fit: W0 = prefactor·u, A = R/λ_q, with the
 * uncertainties carried over (σ(ln W0) unchanged, σ(A) and the covariance divided by λ_q).
 */
export function modelFromSimulation(fit: SimulationFit, ctx: PlannerModelContext): RateModel {
	const { params, lambdaQ } = ctx;
	return {
		process: ctx.process,
		W0_per_s: fit.prefactor * ctx.unit_per_s,
		A: fit.exponent / lambdaQ,
		mode_GHz: ctx.mode_GHz,
		nominal_mK: ctx.nominal_mK,
		W0_sigma: fit.lnPrefactor_sigma,
		A_sigma: fit.exponent_sigma / lambdaQ,
		covariance: fit.covariance / lambdaQ,
		reference: { detuning: params.detuning, damping: params.damping, drive: params.drive },
		source: 'planner'
	};
}

/**
 * The temperature at which 2n̄+1 = coth(hf/2k_BT) reaches N: T = (hf/k_B)/(2·artanh(1/N)); 0 for
 * N ≤ 1 (the quantum limit is reached only at T = 0).
 */
export function temperatureForNoiseFactor(f_GHz: number, N: number): number {
	if (!(N > 1)) return 0;
	return (f_GHz * MK_PER_GHZ) / (2 * Math.atanh(1 / N));
}

/**
 * Where the simulated noise sits for the device: λ/λ_q is the noise factor 2n̄+1 that gives the
 * same λ(2n̄+1), and the temperature that factor needs at the mode frequency.
 */
export function equivalentNoise(lambdas: number[], lambdaQ: number, f_GHz: number) {
	const factors = [Math.min(...lambdas) / lambdaQ, Math.max(...lambdas) / lambdaQ] as [number, number];
	return {
		factors,
		T_mK: factors.map((N) => temperatureForNoiseFactor(f_GHz, N)) as [number, number]
	};
}

export interface CurvePoint {
	T_mK: number;
	rate: number;
	lower: number;
	upper: number;
}

export type Forecast = { ok: true; prediction: RatePrediction; scaled: boolean } | { ok: false; message: string };

/**
 * predictRate at a temperature, scaling an escape model to the operating point when it has a
 * reference; an escape model without one is shown unscaled, and says so.
 */
export function forecast(model: RateModel, T_mK: number, params: ModelParams | null): Forecast {
	try {
		const op =
			model.process === 'escape' && model.reference && params
				? { detuning: params.detuning, damping: params.damping, drive: params.drive }
				: undefined;
		const prediction = predictRate(model, { T_mK, operatingPoint: op });
		if (model.process === 'escape' && !model.reference) {
			prediction.warnings.push('this escape model has no reference operating point, so it is not scaled to the one above');
		}
		return { ok: true, prediction, scaled: op !== undefined };
	} catch (e) {
		return { ok: false, message: (e as Error).message };
	}
}

/** W(T) with its band on an even grid of temperatures from 0 to T_max. */
export function rateCurve(model: RateModel, T_max_mK: number, params: ModelParams | null, n = 64): CurvePoint[] {
	const out: CurvePoint[] = [];
	for (let i = 0; i < n; i++) {
		const T_mK = (T_max_mK * i) / (n - 1);
		const f = forecast(model, T_mK, params);
		if (f.ok) out.push({ T_mK, rate: f.prediction.rate_per_s, lower: f.prediction.lower, upper: f.prediction.upper });
	}
	return out;
}
