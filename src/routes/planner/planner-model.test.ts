// The planner's unit conventions and input checks, against values computed here from the formulas.
import { describe, expect, it } from 'vitest';
import { predictRate, type SimulationFit } from '$lib/physics/activation';
import type { ModelParams } from '$lib/physics/model';
import { equivalentNoise, modelFromSimulation, temperatureForNoiseFactor } from './planner-model';
import {
	DEFAULT_FORM,
	formForSetup,
	formFromQuery,
	parsePlannerForm,
	parseSweepForm,
	queryFromForm,
	DEFAULT_SWEEP,
	RATE_UNITS
} from './planner-inputs';

// Exact SI constants (SI Brochure, 9th ed.; REFERENCES.md), so the noise factor is computed here
// independently of occupation.ts: 2n̄+1 = coth(hf/2k_BT) with n̄ the Bose–Einstein occupation.
const h = 6.62607015e-34;
const kB = 1.380649e-23;
const noiseFactorHere = (f_GHz: number, T_mK: number) => {
	const x = (h * f_GHz * 1e9) / (kB * T_mK * 1e-3);
	return 1 + 2 / Math.expm1(x);
};

const params: ModelParams = { order: 3, detuning: 0.2, damping: 1, drive: 0.333, nonlinearity: { kind: 'kerr', K: 0.157 } };
// A fit as fitFromSimulation reports it: ln W = ln W0 − R/λ (in model time units).
const fit: SimulationFit = {
	exponent: 0.58,
	exponent_sigma: 0.09,
	prefactor: 0.17,
	lnPrefactor_sigma: 0.3,
	covariance: 0.024,
	method: 'wls',
	goodnessOfFit: { statistic: 'chi-square', value: 1, dof: 2, pValue: 0.6 },
	points: []
};

describe('modelFromSimulation', () => {
	const lambdaQ = 0.05;
	const unit = RATE_UNITS.per_us.per_s;
	const model = modelFromSimulation(fit, { process: 'escape', params, unit_per_s: unit, lambdaQ, mode_GHz: 5, nominal_mK: 12 });

	it('predicts the simulated straight line at λ = λ_q(2n̄+1), times the rate unit', () => {
		// The simulator's noise is γ·λ·(2n̄+1) (REFERENCES.md, facts of the trade), so the setup at
		// temperature T sits on the sweep's line at λ_eff = λ_q(2n̄+1).
		for (const T_mK of [0, 12, 60, 150, 400]) {
			const N = T_mK === 0 ? 1 : noiseFactorHere(5, T_mK);
			const lambdaEff = lambdaQ * N;
			const expected = unit * fit.prefactor * Math.exp(-fit.exponent / lambdaEff);
			const p = predictRate(model, { T_mK, operatingPoint: { detuning: 0.2, damping: 1, drive: 0.333 } });
			expect(p.rate_per_s / expected - 1).toBeCloseTo(0, 10);

			// Its band is the fit's own band at x = 1/λ_eff: var = σ_c² + x²σ_R² − 2x·cov (linear
			// error propagation), with the 95 % two-sided normal quantile 1.959964 (standard table).
			const x = 1 / lambdaEff;
			const sd = Math.sqrt(fit.lnPrefactor_sigma ** 2 + x * x * fit.exponent_sigma ** 2 - 2 * x * fit.covariance);
			expect(Math.log(p.upper / p.rate_per_s)).toBeCloseTo(1.959964 * sd, 5);
		}
	});

	it('keeps the operating point as the reference and marks the source', () => {
		expect(model.reference).toEqual({ detuning: 0.2, damping: 1, drive: 0.333 });
		expect(model.source).toBe('planner');
		expect(model.A).toBeCloseTo(0.58 / 0.05, 12);
	});
});

describe('temperatureForNoiseFactor', () => {
	it('inverts coth(hf/2k_BT)', () => {
		for (const N of [1.0001, 1.2, 2, 8, 40]) {
			const T = temperatureForNoiseFactor(6.8, N);
			expect(noiseFactorHere(6.8, T) / N - 1).toBeCloseTo(0, 9);
		}
	});
	it('gives 0 K at and below the quantum limit', () => {
		expect(temperatureForNoiseFactor(5, 1)).toBe(0);
		expect(temperatureForNoiseFactor(5, 0.5)).toBe(0);
	});
	it('maps a λ range to noise factors λ/λ_q', () => {
		const e = equivalentNoise([0.4, 0.2, 0.3], 0.05, 5);
		expect(e.factors[0]).toBeCloseTo(4, 12);
		expect(e.factors[1]).toBeCloseTo(8, 12);
	});
});

describe('planner inputs', () => {
	it('names each bad field in its own message', () => {
		const r = parsePlannerForm({ ...DEFAULT_FORM, damping: '', drive: '-1', T_mK: 'warm', kind: 'junction', eta: '0' });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors.damping).toBe('Damping γ is required');
		expect(r.errors.drive).toMatch(/^Drive ε must be positive/);
		expect(r.errors.T_mK).toMatch(/^Temperature T must be a number/);
		expect(r.errors.eta).toMatch(/^Junction term η must not be zero/);
		expect(r.errors.detuning).toBeUndefined();
	});

	it('round-trips a form through the shared link, relative to a setup’s own values (common practice)', () => {
		const setup = { order: 2, states: 2, modeGHz: 6.8, nominalMK: 15 };
		const base = formForSetup(DEFAULT_FORM, setup);
		const form = { ...base, detuning: '-0.1', T_mK: '5', unit: 'two_pi_MHz' as const };
		const q = queryFromForm(form, 'abc', base);
		expect(q.get('setup')).toBe('abc');
		expect(q.has('f')).toBe(false); // the setup's own frequency is not repeated
		expect(formFromQuery(q, base)).toEqual(form);
	});

	it('refuses a λ list with a word in it, naming the word', () => {
		const r = parseSweepForm({ ...DEFAULT_SWEEP, lambdas: '0.3, abc' });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors.lambdas).toMatch(/"abc"/);
		const one = parseSweepForm({ ...DEFAULT_SWEEP, lambdas: '0.3' });
		expect(one.ok).toBe(false);
	});
});
