// CODATA 2018 recommended values [CODATA18]: Tiesinga, Mohr, Newell, Taylor, Rev. Mod. Phys. 93, 025010 (2021).
export const CODATA_EDITION = "CODATA 2018";

/** Planck constant h in J·s (exact since the 2019 SI). */
export const PLANCK_J_S = 6.62607015e-34;
/** Reduced Planck constant ħ = h/2π in J·s (CODATA lists 1.054571817e-34). */
export const HBAR_J_S = PLANCK_J_S / (2 * Math.PI);
/** Electron rest mass m_e in kg. */
export const ELECTRON_MASS_KG = 9.1093837015e-31;
/** Elementary charge e in C (exact); also the number of joules in one electronvolt. */
export const ELEMENTARY_CHARGE_C = 1.602176634e-19;
/** Boltzmann constant k_B in J/K (exact). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Boltzmann constant k_B in eV/K (CODATA lists 8.617333262e-5). */
export const BOLTZMANN_EV_PER_K = BOLTZMANN_J_PER_K / ELEMENTARY_CHARGE_C;

/** Speed of light in vacuum c in m/s (exact). */
export const SPEED_OF_LIGHT_M_PER_S = 299792458;
/** Rydberg constant R∞ in 1/m. */
export const RYDBERG_PER_M = 10973731.56816;
/** The Rydberg energy R∞hc in eV (CODATA lists 13.605693122994); form factors are often given in Ry. */
export const RYDBERG_EV = (RYDBERG_PER_M * PLANCK_J_S * SPEED_OF_LIGHT_M_PER_S) / ELEMENTARY_CHARGE_C;

const SQUARE_METRES_PER_SQUARE_ANGSTROM = 1e-20;

/** ħ²/(2 m_e) in eV·Å², derived from the constants above (≈ 3.80998212). */
export const HBAR2_OVER_2ME_EV_A2 =
  (HBAR_J_S * HBAR_J_S) / (2 * ELECTRON_MASS_KG) / ELEMENTARY_CHARGE_C / SQUARE_METRES_PER_SQUARE_ANGSTROM;
