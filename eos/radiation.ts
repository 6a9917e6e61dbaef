/**
 * Equilibrium photon gas (black-body radiation, Planck's law, M. Planck, Ann. Phys. 4, 553 (1901);
 * the Stefan–Boltzmann T⁴ law that follows from it):
 *
 *   P = a T⁴/3,   e = a T⁴/ρ,   s = 4 a T³/(3ρ),   a = 8π⁵k⁴/(15 h³ c³),
 *
 * with zero chemical potential, per unit mass, and the derivatives in ρ and T. Exact to rounding.
 */
import { RADIATION_A } from './constants.js';

export interface PhotonGasTerms {
  pressure: number;
  dPdRho: number;
  dPdT: number;
  energy: number;
  dEdRho: number;
  dEdT: number;
  entropy: number;
  dSdRho: number;
  dSdT: number;
}

export function createPhotonGasTerms(): PhotonGasTerms {
  return { pressure: 0, dPdRho: 0, dPdT: 0, energy: 0, dEdRho: 0, dEdT: 0, entropy: 0, dSdRho: 0, dSdT: 0 };
}

/** Fill `out` with the photon gas at density rho [g/cm³] and temperature T [K]. */
export function photonGas(rho: number, T: number, out: PhotonGasTerms): void {
  const aT3 = RADIATION_A * T * T * T;
  const aT4 = aT3 * T;
  out.pressure = aT4 / 3;
  out.dPdRho = 0;
  out.dPdT = (4 * aT3) / 3;
  out.energy = aT4 / rho;
  out.dEdRho = -aT4 / (rho * rho);
  out.dEdT = (4 * aT3) / rho;
  out.entropy = (4 * aT3) / (3 * rho);
  out.dSdRho = -out.entropy / rho;
  out.dSdT = (4 * RADIATION_A * T * T) / rho;
}
