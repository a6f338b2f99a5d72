// Bose–Einstein occupation and noise factor against values computed here from the SI constants.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { BOLTZMANN_J_per_K, MK_PER_GHZ, PLANCK_J_s } from '$lib/physics/constants';
import { noiseFactor, thermalOccupation } from '$lib/physics/occupation';

// Exact SI values, typed in from the SI Brochure 9th ed. (CODATA 2018), not imported.
const h = 6.62607015e-34;
const kB = 1.380649e-23;

/** n̄ = 1/(e^{hf/k_BT} − 1) written out with Math.exp, independently of the module. */
function boseEinstein(f_GHz: number, T_mK: number): number {
	const x = (h * f_GHz * 1e9) / (kB * T_mK * 1e-3);
	return 1 / (Math.exp(x) - 1);
}

describe('constants', () => {
	it('are the exact SI values', () => {
		// SI Brochure 9th ed. / CODATA 2018: h and k_B are exact by definition.
		expect(PLANCK_J_s).toBe(6.62607015e-34);
		expect(BOLTZMANN_J_per_K).toBe(1.380649e-23);
	});

	it('give hf/k_B = 0.23996 K at 5 GHz', () => {
		// REFERENCES.md (Physics, thermal occupation): at 5 GHz hf/k_B = 0.23996 K.
		expect((5 * MK_PER_GHZ) / 1000).toBeCloseTo(0.23996, 5);
	});
});

describe('thermalOccupation', () => {
	// Bose–Einstein n̄ = 1/(e^{hf/k_BT} − 1) (REFERENCES.md), evaluated in the test with Math.exp.
	it.each([10, 20, 50, 100, 300, 1000])('matches Bose–Einstein at 5 GHz, %d mK', (T_mK) => {
		const expected = boseEinstein(5, T_mK);
		expect(thermalOccupation(5, T_mK)).toBeGreaterThan(0);
		expect(Math.abs(thermalOccupation(5, T_mK) - expected) / expected).toBeLessThan(1e-12);
	});

	it.each([
		[4.2, 15],
		[7.5, 35],
		[2, 80],
		[11, 250]
	])('matches Bose–Einstein at %d GHz, %d mK', (f_GHz, T_mK) => {
		const expected = boseEinstein(f_GHz, T_mK);
		expect(Math.abs(thermalOccupation(f_GHz, T_mK) - expected) / expected).toBeLessThan(1e-12);
	});

	it('at 5 GHz and 50 mK is e^{−4.7992}/(1 − e^{−4.7992}) ≈ 8.3e-3', () => {
		// hf/k_BT = 0.23996 K / 0.05 K = 4.7992 (REFERENCES.md value); n̄ by hand ≈ 0.008304.
		const x = 0.23996 / 0.05;
		expect(thermalOccupation(5, 50)).toBeCloseTo(Math.exp(-x) / (1 - Math.exp(-x)), 6);
	});

	it('approaches k_BT/hf − 1/2 when hot', () => {
		// High-temperature expansion of 1/(e^x − 1) = 1/x − 1/2 + x/12 − … (standard series).
		for (const T_mK of [10_000, 100_000, 1e6]) {
			const x = (h * 5e9) / (kB * T_mK * 1e-3);
			const n = thermalOccupation(5, T_mK);
			expect(Math.abs(n - (1 / x - 0.5))).toBeLessThan(x / 10);
			expect(n - (1 / x - 0.5)).toBeGreaterThan(0); // the x/12 term is positive
		}
	});

	it('keeps full precision where e^x − 1 would cancel', () => {
		// At x = hf/k_BT ≈ 2.4e-9 the series 1/x − 1/2 + x/12 is exact to double precision
		// (next term x³/720); Math.exp(x) − 1 would be off by ~1e-8 relative here.
		const T_mK = 1e11;
		const x = (h * 5e9) / (kB * T_mK * 1e-3);
		const series = 1 / x - 0.5 + x / 12;
		expect(Math.abs(thermalOccupation(5, T_mK) - series) / series).toBeLessThan(1e-13);
	});

	it('goes to 0 as T → 0 without NaN or overflow', () => {
		// n̄ → e^{−hf/k_BT} → 0 in the quantum limit (Bose–Einstein, REFERENCES.md).
		expect(thermalOccupation(5, 0)).toBe(0);
		expect(thermalOccupation(5, 1e-3)).toBe(0); // x ≈ 2.4e5 overflows e^x; 1/∞ = 0
		expect(thermalOccupation(5, 0.2)).toBe(0); // x ≈ 1200: e^x overflows, 1/∞ = 0
		// x ≈ 480: still finite, and equal to e^{−x} to double precision.
		const x = (h * 5e9) / (kB * 0.5e-3);
		expect(Math.abs(thermalOccupation(5, 0.5) / Math.exp(-x) - 1)).toBeLessThan(1e-12);
		expect(Number.isNaN(thermalOccupation(100, 0))).toBe(false);
	});

	it('rejects bad input with a RangeError naming the argument', () => {
		expect(() => thermalOccupation(5, -1)).toThrow(RangeError);
		expect(() => thermalOccupation(5, -1)).toThrow(/T_mK/);
		expect(() => thermalOccupation(5, Number.NaN)).toThrow(/T_mK/);
		expect(() => thermalOccupation(-5, 20)).toThrow(/f_GHz/);
		expect(() => thermalOccupation(Number.NaN, 20)).toThrow(/f_GHz/);
		expect(() => thermalOccupation(0, 20)).toThrow(/f_GHz/);
		expect(() => noiseFactor(5, Number.POSITIVE_INFINITY)).toThrow(/T_mK/);
	});

	it('is increasing in T and in 1/f (property)', () => {
		// ∂n̄/∂T > 0 and ∂n̄/∂f < 0: n̄ depends on f/T only and decreases in it (common practice).
		const f = fc.double({ min: 0.5, max: 20, noNaN: true });
		const T = fc.double({ min: 1, max: 5000, noNaN: true });
		fc.assert(
			fc.property(f, T, T, (f_GHz, T1, T2) => {
				const [lo, hi] = T1 <= T2 ? [T1, T2] : [T2, T1];
				return thermalOccupation(f_GHz, lo) <= thermalOccupation(f_GHz, hi);
			}),
			{ seed: 20240611 }
		);
		fc.assert(
			fc.property(f, f, T, (f1, f2, T_mK) => {
				const [lo, hi] = f1 <= f2 ? [f1, f2] : [f2, f1];
				return thermalOccupation(hi, T_mK) <= thermalOccupation(lo, T_mK);
			}),
			{ seed: 20240612 }
		);
		// Strict where the values are well above underflow.
		expect(thermalOccupation(5, 60)).toBeGreaterThan(thermalOccupation(5, 59));
		expect(thermalOccupation(4.9, 60)).toBeGreaterThan(thermalOccupation(5, 60));
	});
});

describe('noiseFactor', () => {
	it('equals 2n̄ + 1 = coth(hf/2k_BT)', () => {
		// 2/(e^x − 1) + 1 = (e^x + 1)/(e^x − 1) = coth(x/2), identity evaluated with Math.exp.
		for (const T_mK of [10, 20, 50, 100, 300, 1000]) {
			const x = (h * 5e9) / (kB * T_mK * 1e-3);
			const coth = (Math.exp(x) + 1) / (Math.exp(x) - 1);
			expect(Math.abs(noiseFactor(5, T_mK) - coth) / coth).toBeLessThan(1e-12);
			expect(noiseFactor(5, T_mK)).toBeCloseTo(2 * boseEinstein(5, T_mK) + 1, 12);
		}
	});

	it('is 1 at T = 0 and ≈ 2k_BT/hf when hot', () => {
		// Quantum limit 2·0 + 1 = 1; classical limit coth(x/2) ≈ 2/x + x/6 (standard series).
		expect(noiseFactor(5, 0)).toBe(1);
		expect(noiseFactor(5, 1)).toBe(1);
		const T_mK = 50_000;
		const x = (h * 5e9) / (kB * T_mK * 1e-3);
		expect(noiseFactor(5, T_mK)).toBeCloseTo(2 / x + x / 6, 8);
	});
});
