/**
 * Coulomb (ion–ion) correction to the ideal gases: the excess free energy of the classical
 * one-component plasma (OCP) of ions in a uniform, rigid electron background, and the pressure,
 * specific energy, specific entropy and their derivatives in ρ, T, Abar and Zbar obtained from it
 * by ANALYTIC differentiation (no finite differences), so the correction is thermodynamically
 * consistent to rounding.
 *
 * Source: A. Y. Potekhin & G. Chabrier (2000), "Equation of state of fully ionized electron-ion
 * plasmas. II. Extension to relativistic densities and to the solid phase", Phys. Rev. E 62, 8554
 * (arXiv:astro-ph/0009261), §IV, the liquid-OCP fit (Eqs. (16)–(17) there; the equation numbers are
 * from memory, the form and the coefficients below were checked against public code that cites
 * the paper):
 *
 *   f(Γ) = F_ex/(N_i k T)
 *        = A1[√(Γ(A2+Γ)) − A2 ln(√(Γ/A2) + √(1+Γ/A2))] + 2A3[√Γ − arctan √Γ]
 *          + B1[Γ − B2 ln(1 + Γ/B2)] + (B3/2) ln(1 + Γ²/B4),
 *   u(Γ) = U_ex/(N_i k T) = Γ df/dΓ
 *        = Γ^{3/2}[A1/√(A2+Γ) + A3/(1+Γ)] + B1Γ²/(B2+Γ) + B3Γ²/(B4+Γ²),
 *   A1 = −0.9070, A2 = 0.62954, A3 = −√3/2 − A1/√A2, B1 = 4.56e-3, B2 = 211.6, B3 = −1e-4,
 *   B4 = 4.62e-3.
 *
 * The choice of A3 builds in the Debye–Hückel limit f → −Γ^{3/2}/√3 (u → −(√3/2)Γ^{3/2}) as
 * Γ → 0. The same paper gives Γ_m = 175.0 ± 0.4 for OCP crystallization; the fit reproduces the
 * Monte Carlo internal energies of the liquid within their statistical errors (~1e-5 relative)
 * for 1 ≤ Γ ≤ Γ_m. Above Γ_m this module keeps using the liquid fit, extrapolated (a supercooled
 * liquid); its leading term (A1+B1)Γ = −0.90244Γ lies within 0.7% of the bcc Madelung energy
 * −0.895929Γ (Madelung constant of the bcc lattice, e.g. Haensel, Potekhin & Yakovlev 2007,
 * "Neutron Stars 1", Table 2.4), and the caller flags such points as crystallized. Solid-phase
 * (lattice, phonon) free energies and ion quantum effects are NOT included.
 *
 * Coupling: Γ_j = Z_j^{5/3} Γ_e, Γ_e = e²/(a_e k T), a_e = (3/(4π n_e))^{1/3}, n_e = ρ Ye N_A.
 * Mixtures: linear mixing rule, F_ex = Σ_j N_j k T f(Γ_j) (e.g. Hansen, Torrie & Vieillefosse 1977,
 * Phys. Rev. A 16, 2153; Potekhin & Chabrier 2000 §V). For (Abar, Zbar) input the plasma is treated
 * as ONE species of charge Zbar and mass Abar.
 *
 * With R = N_A k and the abundances Y_j = X_j/A_j [mol/g], per unit mass:
 *   F = R T Σ Y_j f_j,  P = ρ R T U/3,  e = R T U,  s = R (U − F̃),
 * where U = Σ Y_j u_j, F̃ = Σ Y_j f_j, and (using ∂lnΓ/∂lnρ = 1/3, ∂lnΓ/∂lnT = −1,
 * C = Σ Y_j (u_j − Γ du_j/dΓ)):
 *   ∂P/∂ρ = R T (4U − C)/9,  ∂P/∂T = ρ R C/3,  ∂e/∂ρ = R T (U − C)/(3ρ),  ∂e/∂T = R C,
 *   ∂s/∂ρ = −R C/(3ρ),  ∂s/∂T = R C/T.
 * Abar and Zbar derivatives: Y_j = x_j/Abar with the number fractions x_j fixed; Γ ∝ Zbar² Abar^{−1/3}
 * for the one-species model, Γ_j ∝ (Zbar/Abar)^{1/3} for a nuclide mixture (charges held fixed).
 * Every combination that would cancel (u − Γu', u − f at large Γ, the series at small Γ) is
 * evaluated in a cancellation-free form, so the terms are accurate to a few ulp for all Γ from
 * 1e-15 to 1e12.
 */
import { AVOGADRO, BOLTZMANN_K, ELEMENTARY_CHARGE } from './constants.js';
import { createComponentTerms, type ComponentTerms } from './component-terms.js';

export const OCP_A1 = -0.907;
export const OCP_A2 = 0.62954;
export const OCP_A3 = -Math.sqrt(3) / 2 - OCP_A1 / Math.sqrt(OCP_A2);
export const OCP_B1 = 4.56e-3;
export const OCP_B2 = 211.6;
export const OCP_B3 = -1e-4;
export const OCP_B4 = 4.62e-3;
/** OCP coupling at crystallization (Potekhin & Chabrier 2000: Γ_m = 175.0 ± 0.4). */
export const GAMMA_MELT = 175;
/** Madelung constant of the bcc Coulomb lattice (energy per ion / (Z²e²/a_i)). */
export const MADELUNG_BCC = -0.895929255682;

const R_GAS = AVOGADRO * BOLTZMANN_K;
export const E2_OVER_K = (ELEMENTARY_CHARGE * ELEMENTARY_CHARGE) / BOLTZMANN_K;
export const FOUR_PI_OVER_3_NA = ((4 * Math.PI) / 3) * AVOGADRO;

/** Reduced excess functions of the liquid OCP at one Γ. */
export interface OcpValues {
  /** f = F_ex/(N k T). */
  f: number;
  /** u = U_ex/(N k T) = Γ df/dΓ. */
  u: number;
  /** c = u − Γ du/dΓ  (= C_V,ex/(N k)). */
  c: number;
  /** u − f  (= S_ex/(N k)). */
  s: number;
}

export function createOcpValues(): OcpValues {
  return { f: 0, u: 0, c: 0, s: 0 };
}

// Taylor coefficients of the three small-argument series below (multiplications only in the loops)
/** 2·binom(−1/2, n)/(2n + 3): x√(1+x²) − sinh⁻¹x = Σ_n c_n x^{2n+3}. */
const ASINH_SERIES = Float64Array.from({ length: 14 }, (_, n) => {
  let b = 1;
  for (let k = 0; k < n; k++) b *= -(2 * k + 1) / (2 * k + 2);
  return (2 * b) / (2 * n + 3);
});
/** (−1)^{n+1}/(2n + 1), n ≥ 1: y − arctan y = Σ_n c_n y^{2n+1}. */
const ATAN_SERIES = Float64Array.from({ length: 14 }, (_, k) => ((k % 2 === 0 ? 1 : -1) / (2 * (k + 1) + 1)));
/** (−1)^n/n, n ≥ 2: q − ln(1+q) = Σ_n c_n q^n. */
const LOG1P_SERIES = Float64Array.from({ length: 18 }, (_, k) => ((k % 2 === 0 ? 1 : -1) / (k + 2)));

/** Σ_k c_k t0 r^k, stopped when a term falls below 1e-17 of the sum. */
function series(c: Float64Array, t0: number, r: number): number {
  let term = t0;
  let sum = 0;
  for (let k = 0; k < c.length; k++) {
    const t = c[k] * term;
    sum += t;
    if (Math.abs(t) < 1e-17 * Math.abs(sum)) break;
    term *= r;
  }
  return sum;
}

/** x√(1+x²) − asinh x, without cancellation for small x. */
function sqrtAsinhDifference(x: number): number {
  if (x < 0.2) return series(ASINH_SERIES, x * x * x, x * x);
  return x * Math.sqrt(1 + x * x) - Math.asinh(x);
}

/** y − arctan y, without cancellation for small y. */
function minusArctan(y: number): number {
  if (y < 0.2) return series(ATAN_SERIES, y * y * y, y * y);
  return y - Math.atan(y);
}

/** q − ln(1+q), without cancellation for small q. */
function minusLog1p(q: number): number {
  if (q < 0.1) return series(LOG1P_SERIES, q * q, q);
  return q - Math.log1p(q);
}

/**
 * Potekhin & Chabrier (2000) liquid-OCP fit and its analytic derivatives at coupling Γ > 0.
 * `withF` false: out.f is left NaN where it is not needed for s (Γ > 1), saving its series.
 */
export function ocpLiquid(G: number, out: OcpValues, withF = true): void {
  const A1 = OCP_A1, A2 = OCP_A2, A3 = OCP_A3, B1 = OCP_B1, B2 = OCP_B2, B3 = OCP_B3, B4 = OCP_B4;
  const sG = Math.sqrt(G);
  const G32 = G * sG;
  const G2 = G * G;
  const sA = Math.sqrt(A2 + G);
  // reciprocals once (division is the slow operation here)
  const iA = 1 / sA, i1 = 1 / (1 + G), i2 = 1 / (B2 + G), i4 = 1 / (B4 + G2);
  const u = G32 * (A1 * iA + A3 * i1) + B1 * G2 * i2 + B3 * G2 * i4;
  const c =
    -0.5 * A1 * A2 * G32 * iA * iA * iA +
    0.5 * A3 * G32 * (G - 1) * i1 * i1 -
    B1 * B2 * G2 * i2 * i2 +
    B3 * G2 * (G2 - B4) * i4 * i4;
  const x = sG * INV_SQRT_A2; // (Γ/A2)^{1/2}
  const q = G * INV_B2;
  const lnB4 = Math.log1p(G2 * INV_B4);
  const f = withF || G <= 1
    ? A1 * A2 * sqrtAsinhDifference(x) + 2 * A3 * minusArctan(sG) + B1 * B2 * minusLog1p(q) + 0.5 * B3 * lnB4
    : NaN;
  let s: number;
  if (G > 1) {
    // sinh⁻¹x = ln(x + (1 + x²)^{1/2}) = ln(Γ^{1/2} + (A2 + Γ)^{1/2}) − ½ ln A2 (one log instead of Math.asinh)
    s =
      A1 * A2 * (Math.log(sG + sA) - HALF_LN_A2 - sG * iA) +
      A3 * (2 * Math.atan(sG) - sG * (G + 2) * i1) +
      B1 * B2 * (Math.log1p(q) - G * i2) +
      B3 * G2 * i4 -
      0.5 * B3 * lnB4;
  } else {
    s = u - f;
  }
  out.f = f;
  out.u = u;
  out.c = c;
  out.s = s;
}

export const INV_SQRT_A2 = 1 / Math.sqrt(OCP_A2);
export const HALF_LN_A2 = 0.5 * Math.log(OCP_A2);
const INV_B2 = 1 / OCP_B2;
const INV_B4 = 1 / OCP_B4;

/** Debye–Hückel free energy of the OCP, f = −Γ^{3/2}/√3 (the Γ → 0 limit of the fit). */
export function debyeHuckelFreeEnergy(G: number): number {
  return -(G * Math.sqrt(G)) / Math.sqrt(3);
}

/** Electron coupling parameter Γ_e = e²/(a_e k T), a_e = (3/(4π n_e))^{1/3}, n_e = ρ Ye N_A. */
export function electronCoupling(rho: number, T: number, ye: number): number {
  return (E2_OVER_K / T) * Math.cbrt(FOUR_PI_OVER_3_NA * rho * ye);
}

/** Coulomb correction terms per unit mass (CGS). */
export interface CoulombTerms extends ComponentTerms {
  /** Effective ion coupling ⟨Z^{5/3}⟩ Γ_e (number-weighted); Zbar^{5/3} Γ_e for one species. */
  gamma: number;
}

export function createCoulombTerms(): CoulombTerms {
  // gamma added as a property: the spread form `{ ...terms, gamma: 0 }` takes V8's slow path here
  // (~3 µs a call on Node 20, once per evaluate() call and per PointKernel)
  const terms = createComponentTerms() as CoulombTerms;
  terms.gamma = 0;
  return terms;
}

const ocpScratch = createOcpValues();

/**
 * Coulomb correction at (rho, T) for a composition. `mixture` null: one species Z = zbar,
 * Y = 1/abar. Otherwise the species charges `z53` (Z^{5/3}) and abundances y[row·count + j]
 * (Y_j = X_j/A_j, consistent with abar, zbar) are summed by the linear mixing rule.
 */
export function coulombCorrection(
  rho: number,
  T: number,
  abar: number,
  zbar: number,
  mixture: { count: number; z53: Float64Array; y: Float64Array } | null,
  row: number,
  out: CoulombTerms,
): void {
  const ge = electronCoupling(rho, T, zbar / abar);
  let U = 0;
  let C = 0;
  let S = 0;
  let zExp: number;
  let gammaEff: number;
  if (mixture === null) {
    const G = zbar * Math.cbrt(zbar * zbar) * ge; // Zbar^{5/3} (Math.pow costs ~8 cbrt here)
    ocpLiquid(G, ocpScratch, false);
    const Y = 1 / abar;
    U = Y * ocpScratch.u;
    C = Y * ocpScratch.c;
    S = Y * ocpScratch.s;
    zExp = 2;
    gammaEff = G;
  } else {
    const m = mixture.count;
    const base = row * m;
    let z53avg = 0;
    for (let j = 0; j < m; j++) {
      const Y = mixture.y[base + j];
      const z53 = mixture.z53[j];
      if (Y === 0 || z53 === 0) continue;
      ocpLiquid(z53 * ge, ocpScratch, false);
      U += Y * ocpScratch.u;
      C += Y * ocpScratch.c;
      S += Y * ocpScratch.s;
      z53avg += Y * z53;
    }
    zExp = 1 / 3;
    gammaEff = z53avg * abar * ge;
  }
  const RT = R_GAS * T;
  // Γ du/dΓ summed: U1 = U − C
  const U1 = U - C;
  const third = 1 / 3;
  const i3rho = third / rho;
  out.gamma = gammaEff;
  out.pressure = rho * RT * U * third;
  out.dPdRho = RT * (4 * U - C) * (third * third);
  out.dPdT = rho * R_GAS * C * third;
  out.energy = RT * U;
  out.dEdRho = RT * U1 * i3rho;
  out.dEdT = R_GAS * C;
  out.entropy = R_GAS * S;
  out.dSdRho = -R_GAS * C * i3rho;
  out.dSdT = (R_GAS * C) / T;
  // ∂U/∂Abar = −(U + U1/3)/Abar ; ∂U/∂Zbar = zExp U1/Zbar
  const dUdA = -(U + U1 * third) / abar;
  const dUdZ = (zExp * U1) / zbar;
  out.dPdAbar = rho * RT * dUdA * third;
  out.dPdZbar = rho * RT * dUdZ * third;
  out.dEdAbar = RT * dUdA;
  out.dEdZbar = RT * dUdZ;
}
