// Physical constants, exact in the SI since the 2019 redefinition (SI Brochure 9th ed., CODATA 2018).

/** Planck constant h, J s (exact). */
export const PLANCK_J_s = 6.62607015e-34;

/** Boltzmann constant k_B, J/K (exact). */
export const BOLTZMANN_J_per_K = 1.380649e-23;

/** h·(1 GHz)/k_B expressed in mK: the temperature equivalent of one gigahertz (≈ 47.992 mK). */
export const MK_PER_GHZ = (PLANCK_J_s * 1e9) / BOLTZMANN_J_per_K / 1e-3;
