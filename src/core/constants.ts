/**
 * Physical constants, all from CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)),
 * expressed in the units shellrank uses: eV, Å, K, atomic mass units.
 */

/** hbar^2 / (2 m_e) in eV Å^2 (CODATA 2018). */
export const HBAR2_OVER_2ME_EV_A2 = 3.80998212;

/** k^2 [1/Å^2] per eV of kinetic energy: 2 m_e / hbar^2 = 1 / 3.80998212 = 0.2624683. */
export const K2_PER_EV = 1 / HBAR2_OVER_2ME_EV_A2;

/** Boltzmann constant in eV/K (CODATA 2018, exact). */
export const BOLTZMANN_EV_PER_K = 8.617333262e-5;

/** hbar in eV s (CODATA 2018, exact). */
export const HBAR_EV_S = 6.582119569e-16;

/** Atomic mass unit in kg (CODATA 2018). */
export const ATOMIC_MASS_UNIT_KG = 1.6605390666e-27;

/** Electron mass in kg (CODATA 2018). */
export const ELECTRON_MASS_KG = 9.1093837015e-31;

/** Bohr radius in Å (CODATA 2018). */
export const BOHR_RADIUS_A = 0.529177210903;

/** Hartree energy in eV (CODATA 2018). */
export const HARTREE_EV = 27.211386245988;

/** Fine-structure constant (CODATA 2018). */
export const FINE_STRUCTURE = 7.2973525693e-3;

/** Speed of light in atomic units, 1/alpha. */
export const SPEED_OF_LIGHT_AU = 1 / FINE_STRUCTURE;

/**
 * hbar^2 / (2 k_B) expressed for sigma^2 in Å^2 with masses in amu and temperatures in K:
 * hbar^2 / (k_B * amu) in Å^2 K. Used by the correlated Debye and Einstein models,
 * sigma^2 = hbar^2 / (2 mu k_B T_E) coth(T_E / 2T) etc. Value = 48.508 Å^2 K amu.
 */
export const HBAR2_OVER_KB_AMU_A2_K =
  ((HBAR_EV_S * HBAR_EV_S) * 1.602176634e-19 / (BOLTZMANN_EV_PER_K * ATOMIC_MASS_UNIT_KG)) * 1e20;
