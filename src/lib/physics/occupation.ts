// Thermal occupation of an oscillator mode (Bose–Einstein) and the noise factor 2n̄+1 it sets.
import { MK_PER_GHZ } from './constants';

function requireNonNegative(name: string, value: number): void {
	if (typeof value !== 'number' || !Number.isFinite(value) || value < 0) {
		throw new RangeError(`${name} must be a finite number ≥ 0, got ${String(value)}`);
	}
}

/** hf/k_BT, the energy ratio both functions are built on. Infinity at T = 0. */
function energyRatio(f_GHz: number, T_mK: number): number {
	requireNonNegative('f_GHz', f_GHz);
	requireNonNegative('T_mK', T_mK);
	// A zero-frequency mode has no finite occupation at any temperature; refusing it here also
	// keeps 0/0 (f = 0 at T = 0) out of the result.
	if (f_GHz === 0) throw new RangeError('f_GHz must be > 0, got 0');
	return (f_GHz * MK_PER_GHZ) / T_mK;
}

/**
 * Mean thermal photon number n̄ = 1/(e^{hf/k_BT} − 1) of a mode at f_GHz and temperature T_mK.
 * expm1 keeps full precision when hf ≪ k_BT, where e^x − 1 would cancel; at T → 0 the ratio is
 * Infinity or overflows expm1 to Infinity, and the result is exactly 0.
 */
export function thermalOccupation(f_GHz: number, T_mK: number): number {
	return 1 / Math.expm1(energyRatio(f_GHz, T_mK));
}

/**
 * Noise factor 2n̄ + 1 = coth(hf/2k_BT): 1 in the quantum limit, ≈ 2k_BT/hf when hot. Written as
 * coth rather than 2n̄+1 so it is accurate at both ends without a branch.
 */
export function noiseFactor(f_GHz: number, T_mK: number): number {
	return 1 / Math.tanh(energyRatio(f_GHz, T_mK) / 2);
}
