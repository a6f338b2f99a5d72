// Expected counts per window against the activation law, computed here from the SI constants
// independently of the physics module, and against the physics module's own predictRate.
import { describe, expect, it } from 'vitest';
import { compileRates, expectFrame, parseRunInfo } from '../../../src/lib/detect';
import { predictRate } from '../../../src/lib/physics/activation';
import { frame } from './frames';
import { flatSwitching, run6, warmSwitching } from './models';

// CODATA 2018 / SI 2019 exact values.
const h = 6.62607015e-34;
const kB = 1.380649e-23;
/** W0·exp(−A/(2n̄+1)) with n̄ = 1/(e^{hf/kT} − 1), written out from the Bose–Einstein formula. */
function activation(W0: number, A: number, f_GHz: number, T_mK: number): number {
	const nBar = 1 / (Math.exp((h * f_GHz * 1e9) / (kB * T_mK * 1e-3)) - 1);
	return W0 * Math.exp(-A / (2 * nBar + 1));
}

const rates = (info = run6({ switching: warmSwitching })) => compileRates(parseRunInfo(info));

describe('expected switches per window', () => {
	it('follow W(T)·dwell_s at the window’s own mixing-chamber temperature (Bose–Einstein, SI constants)', () => {
		for (const T of [8, 15, 20, 26.5, 30, 45, 120]) {
			const f = { ...frame(1, 0.9), dwell_s: 0.83, switches: 3, aux: { mxc_mK: T } };
			const e = expectFrame(f, rates());
			expect(e.measured).toBe(true);
			expect(e.T_mK).toBe(T);
			expect(e.switching!.expected / activation(74.2, 6, 1, T) / 0.83).toBeCloseTo(1, 10);
			// and the physics module's prediction agrees (same law, other code)
			expect(e.switching!.expected).toBeCloseTo(predictRate(warmSwitching as never, { T_mK: T }).rate_per_s * 0.83, 12);
			expect(e.switching!.expectedNominal / activation(74.2, 6, 1, 20) / 0.83).toBeCloseTo(1, 10);
		}
	});

	it('use the nominal temperature when the frame has no usable mxc_mK (missing, negative)', () => {
		for (const aux of [undefined, { pump_dBm: -3 }, { mxc_mK: -1 }] as (Record<string, number> | undefined)[]) {
			const f = { ...frame(1, 0.9), ...(aux ? { aux } : {}) };
			const e = expectFrame(f, rates());
			expect(e.measured).toBe(false);
			expect(e.T_mK).toBe(20);
			expect(e.switching!.expected).toBe(e.switching!.expectedNominal);
			expect(e.switching!.expected / activation(74.2, 6, 1, 20)).toBeCloseTo(1, 10);
		}
	});

	it('the setup’s nominal temperature overrides the model’s', () => {
		const e = expectFrame(frame(1, 0.9), rates(run6({ switching: warmSwitching }, { nominal_mK: 25 })));
		expect(e.T_mK).toBe(25);
		expect(e.switching!.expected / activation(74.2, 6, 1, 25)).toBeCloseTo(1, 10);
	});

	it('zero exposure gives an expected count of exactly 0, never NaN', () => {
		const e = expectFrame({ ...frame(1, 0.9), dwell_s: 0, switches: 4 }, rates());
		expect(e.switching).toEqual({ count: 4, exposure_s: 0, expected: 0, expectedNominal: 0 });
	});

	it('a run without a model has no expectation for that process', () => {
		const e = expectFrame(frame(1, 0.9), rates(run6({ switching: flatSwitching(2) })));
		expect(e.escape).toBeNull();
		expect(e.switching!.expected).toBe(2);
	});

	it('escape predictions scale the exponent by (γ²+δ²)/ε² relative to the model’s reference', () => {
		const escape = {
			process: 'escape' as const,
			W0_per_s: 50,
			A: 4,
			mode_GHz: 1,
			nominal_mK: 20,
			reference: { detuning: 0, damping: 1, drive: 2 }
		};
		const op = { detuning: 0.5, damping: 1, drive: 2 };
		const r = rates(run6({ escape }, { operatingPoint: op }));
		const e = expectFrame({ ...frame(1, 0.9), vacuum_s: 0.2, escapes: 1, aux: { mxc_mK: 25 } }, r);
		const s = (0.5 ** 2 + 1) / 4 / (1 / 4); // (γ²+δ²)/ε² over the reference's
		expect(e.escape!.expected / (activation(50, 4 * s, 1, 25) * 0.2)).toBeCloseTo(1, 10);
		expect(e.escape!.expected).toBeCloseTo(predictRate(escape as never, { T_mK: 25, operatingPoint: op }).rate_per_s * 0.2, 12);
	});

	it('a bad model is refused with the field named', () => {
		expect(() => parseRunInfo(run6({ switching: { ...warmSwitching, W0_per_s: -1 } }))).toThrow(/rateModels\.switching\.W0_per_s/);
		expect(() => parseRunInfo(run6({ switching: { ...warmSwitching, process: 'escape' } }))).toThrow(
			/rateModels\.switching.*switching model/
		);
	});
});
