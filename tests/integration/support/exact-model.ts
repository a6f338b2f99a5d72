// The rate model the detector tests stream against: W = W0·exp(−A/(2n̄+1)) with W0 = 2e and A = 2.
// At 5 GHz and 12 mK n̄ ≈ 2e-9 (Bose–Einstein occupation, common practice), so W ≈ W0·e^{−A} = 1
// switch per second. Zero stated uncertainty: a drift is judged against the prediction itself.
export const EXACT_UNIT_RATE_MODEL = {
	process: 'switching',
	W0_per_s: Math.E * 2,
	A: 2,
	mode_GHz: 5,
	nominal_mK: 12,
	W0_sigma: 0,
	A_sigma: 0,
	source: 'manual'
} as const;
