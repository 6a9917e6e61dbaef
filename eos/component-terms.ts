/**
 * The record every matter component fills per point, per unit mass (CGS): P, e, s with their ρ and T
 * derivatives, and P, e with their Abar and Zbar derivatives. Shared by the ion gas (ions.ts) and the
 * Coulomb correction (coulomb.ts); each adds its own diagnostic field.
 */
export interface ComponentTerms {
  pressure: number;
  dPdRho: number;
  dPdT: number;
  dPdAbar: number;
  dPdZbar: number;
  energy: number;
  dEdRho: number;
  dEdT: number;
  dEdAbar: number;
  dEdZbar: number;
  entropy: number;
  dSdRho: number;
  dSdT: number;
}

export function createComponentTerms(): ComponentTerms {
  return {
    pressure: 0, dPdRho: 0, dPdT: 0, dPdAbar: 0, dPdZbar: 0,
    energy: 0, dEdRho: 0, dEdT: 0, dEdAbar: 0, dEdZbar: 0,
    entropy: 0, dSdRho: 0, dSdT: 0,
  };
}
