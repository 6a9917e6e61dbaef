/**
 * Physical constants in CGS units: the CODATA 2018 recommended values
 * (E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, Rev. Mod. Phys. 93, 025010 (2021);
 * NIST SP 961). h, k_B, c, N_A and e (in coulombs) are exact in the 2019 SI; m_e and m_u carry
 * the CODATA 2018 uncertainties (3e-10 relative). Every other constant here is derived from these,
 * so the set is self-consistent to rounding.
 *
 * The elementary charge in esu is e[C] * c[cm/s] / 10, the Gaussian-units convention; since the 2019
 * SI the vacuum permeability is no longer exactly 4π·1e-7, so e²/(ħc) computed here differs from the
 * CODATA fine-structure constant by ~5.5e-10 relative (the deviation of μ0 from 4π·1e-7).
 */

export const CONSTANTS_SET = 'CODATA 2018';

/** Planck constant [erg s] (exact). */
export const PLANCK_H = 6.62607015e-27;
/** Reduced Planck constant ħ = h/2π [erg s]. */
export const HBAR = PLANCK_H / (2 * Math.PI);
/** Boltzmann constant [erg/K] (exact). */
export const BOLTZMANN_K = 1.380649e-16;
/** Speed of light in vacuum [cm/s] (exact). */
export const SPEED_OF_LIGHT = 2.99792458e10;
/** Avogadro constant [1/mol] (exact). */
export const AVOGADRO = 6.02214076e23;
/** Electron mass [g]. */
export const ELECTRON_MASS = 9.1093837015e-28;
/** Atomic mass constant m_u = 1 u [g]. */
export const ATOMIC_MASS_UNIT = 1.6605390666e-24;
/** Elementary charge in coulombs (exact). */
export const ELEMENTARY_CHARGE_SI = 1.602176634e-19;
/** Elementary charge [esu = statC] = e[C]·c[cm/s]/10. */
export const ELEMENTARY_CHARGE = (ELEMENTARY_CHARGE_SI * SPEED_OF_LIGHT) / 10;
/** Electron volt [erg] (exact). */
export const ELECTRON_VOLT = ELEMENTARY_CHARGE_SI * 1e7;
/** Newtonian constant of gravitation [cm³ g⁻¹ s⁻²] (CODATA 2018: 6.67430(15)e-11 m³ kg⁻¹ s⁻²). */
export const GRAVITATIONAL_G = 6.6743e-8;

/** Electron rest energy m_e c² [erg]. */
export const ELECTRON_REST_ENERGY = ELECTRON_MASS * SPEED_OF_LIGHT * SPEED_OF_LIGHT;
/** Radiation density constant a = 8π⁵k⁴/(15h³c³) [erg cm⁻³ K⁻⁴]. */
export const RADIATION_A =
  (8 * Math.PI ** 5 * BOLTZMANN_K ** 4) / (15 * PLANCK_H ** 3 * SPEED_OF_LIGHT ** 3);
/** Stefan–Boltzmann constant σ = a c / 4 [erg cm⁻² s⁻¹ K⁻⁴]. */
export const STEFAN_BOLTZMANN = (RADIATION_A * SPEED_OF_LIGHT) / 4;
/** Fine-structure constant in Gaussian units e²/(ħc) (see the note above on μ0). */
export const FINE_STRUCTURE = (ELEMENTARY_CHARGE * ELEMENTARY_CHARGE) / (HBAR * SPEED_OF_LIGHT);
/** Reduced Compton wavelength of the electron ħ/(m_e c) [cm]. */
export const ELECTRON_COMPTON_REDUCED = HBAR / (ELECTRON_MASS * SPEED_OF_LIGHT);

/**
 * Prefactor of the electron–positron integrals, K = 8π√2 (m_e c/h)³ [cm⁻³]
 * (PHYSICS.md §2: n = K β^{3/2}[F_{1/2} + β F_{3/2}]).
 */
export const PAIR_DENSITY_K =
  8 * Math.PI * Math.SQRT2 * ((ELECTRON_MASS * SPEED_OF_LIGHT) / PLANCK_H) ** 3;

/** All constants as one record, for response metadata and table-file attributes. */
export const constants = Object.freeze({
  set: CONSTANTS_SET,
  h: PLANCK_H,
  hbar: HBAR,
  kB: BOLTZMANN_K,
  c: SPEED_OF_LIGHT,
  NA: AVOGADRO,
  me: ELECTRON_MASS,
  mu: ATOMIC_MASS_UNIT,
  e: ELEMENTARY_CHARGE,
  eV: ELECTRON_VOLT,
  G: GRAVITATIONAL_G,
  mec2: ELECTRON_REST_ENERGY,
  a: RADIATION_A,
  sigmaSB: STEFAN_BOLTZMANN,
  alpha: FINE_STRUCTURE,
});
