/**
 * Ideal classical gas of nuclei (ions): pressure, specific energy and specific entropy with their
 * derivatives in density ρ, temperature T and mean mass number Abar.
 *
 *   n_i = ρ N_A / Abar,   P = n_i k_B T,   e = (3/2) P/ρ,
 *   s = (N_A k_B / Abar) [ ln( (1/n_i) (m_i k_B T / (2π ħ²))^{3/2} ) + 5/2 ],   m_i = Abar·m_u
 *
 * The entropy is the Sackur–Tetrode equation (O. Sackur, Ann. Phys. 36, 958 (1911); H. Tetrode,
 * Ann. Phys. 38, 434 (1912)) for point particles of mass Abar·m_u. Internal partition functions
 * (nuclear spin degeneracy, excited nuclear states) are ignored, and a mixture is treated as one
 * species of mass Abar (the entropy of mixing is not included). Exact to rounding for the model;
 * the model itself fails where the ions become quantum (n_i λ_i³ ≳ 1, flagged by the caller) or
 * where Coulomb coupling matters (added separately in coulomb.ts).
 */
import { ATOMIC_MASS_UNIT, AVOGADRO, BOLTZMANN_K, HBAR } from './constants.js';
import { createComponentTerms, type ComponentTerms } from './component-terms.js';

/** The ion gas's terms, per unit mass (CGS). */
export interface IonGasTerms extends ComponentTerms {
  /** Degeneracy measure n_i λ_i³ with λ_i = (2πħ²/(m_i k T))^{1/2}; ≳ 1 means quantum ions. */
  degeneracy: number;
}

export function createIonGasTerms(): IonGasTerms {
  return { ...createComponentTerms(), degeneracy: 0 };
}

/** N_A k, the gas constant per unit Abar. */
export const R_GAS = AVOGADRO * BOLTZMANN_K;
/** ln of (m_u k_B / (2π ħ²))^{3/2}, the quantum concentration per (Abar T)^{3/2}. */
export const LN_QC_UNIT = 1.5 * Math.log((ATOMIC_MASS_UNIT * BOLTZMANN_K) / (2 * Math.PI * HBAR * HBAR));

/** Fill `out` with the ideal ion gas at density rho [g/cm³], temperature T [K], mean mass number abar. */
export function ionGas(rho: number, T: number, abar: number, out: IonGasTerms): void {
  const c = R_GAS / abar; // N_A k / Abar [erg g⁻¹ K⁻¹]
  const P = rho * c * T;
  out.pressure = P;
  out.dPdRho = c * T;
  out.dPdT = rho * c;
  out.dPdAbar = -P / abar;
  out.dPdZbar = 0;
  const e = 1.5 * c * T;
  out.energy = e;
  out.dEdRho = 0;
  out.dEdT = 1.5 * c;
  out.dEdAbar = -e / abar;
  out.dEdZbar = 0;
  // ln(n_Q/n_i) = 1.5 ln(Abar T) + LN_QC_UNIT − ln(ρ N_A/Abar)
  const lnRatio = 1.5 * Math.log(abar * T) + LN_QC_UNIT - Math.log((rho * AVOGADRO) / abar);
  out.entropy = c * (lnRatio + 2.5);
  out.dSdRho = -c / rho;
  out.dSdT = (1.5 * c) / T;
  out.degeneracy = Math.exp(-lnRatio);
}
