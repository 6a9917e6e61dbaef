/**
 * The ideal electron–positron gas with thermally created pairs (PHYSICS.md §2): number densities,
 * pressure, energy and entropy per unit volume, and their analytic derivatives with respect to
 * d = ρ·Ye at fixed T and to T at fixed d.
 *
 * With β = k_B T/(m_e c²), K = 8π√2 (m_e c/h)³ and the generalized Fermi–Dirac integrals F_k(η, β)
 * of ./fermi-dirac.ts (the standard forms, as in Timmes & Arnett 1999, ApJS 125, 277):
 *   n = K β^{3/2} [F_{1/2} + β F_{3/2}],   P = (2/3) K m_e c² β^{5/2} [F_{3/2} + (β/2) F_{5/2}],
 *   U = K m_e c² β^{5/2} [F_{3/2} + β F_{5/2}]  (kinetic energy density),
 *   S = (U + P − η_s k_B T n)/T per species, η₋ = η, η₊ = −η − 2/β; the positrons' energy carries
 *   the rest mass 2 m_e c² n₊ of the pairs (added once, not in S).
 * Where a species is degenerate (η_s ≥ 40) U + P − η_s k_B T n cancels to ~1/η_s² and S is taken
 * instead from S = k_B K β^{3/2} [G_{1/2} + β G_{3/2}], G_k = ∫ x^k (1+βx/2)^{1/2} σ dx with the
 * per-state entropy σ = −f ln f − (1−f) ln(1−f), summed by the Sommerfeld series (no cancellation).
 *
 * η follows from charge neutrality n₋ − n₊ = d·N_A: Newton's method on ln n₋ − ln(n₊ + d N_A),
 * bracketed (bisection when a step leaves the bracket), with cheap evaluations (n and ∂n/∂η only)
 * until the step is below 1e-3·max(1, η); then one full evaluation (all integrals with first and
 * second derivatives) whose remaining Newton step is applied to every output by a second-order
 * Taylor shift. Starting guesses: the zero-temperature Fermi energy with its first Sommerfeld
 * correction, or the non-degenerate pair-plasma limit n₀ = 2A sinh(η + 1/β).
 *
 * Derivatives are analytic: the η- and β-derivatives of the integrals chained through neutrality,
 * ∂η/∂d = N_A/∂(n₋−n₊)/∂η and ∂η/∂T = −(β/T) ∂(n₋−n₊)/∂β / ∂(n₋−n₊)/∂η. Where η > 0 the temperature
 * derivatives of the total P and U come from the exact identities ∂P/∂T|_d = S − d ∂S/∂d|_T and
 * ∂U/∂T|_d = T ∂S/∂T|_d (the direct chain subtracts terms equal to ~1/η²), the electrons getting
 * the total minus the (then non-degenerate) positrons.
 *
 * Positrons are skipped when their largest possible share of any output is below 1e-18.
 *
 * Accuracy, against an independent momentum-space computation in mpmath
 * (tests/eos/fixtures/pair-gas/generate.py, 28 points over d ∈ [1e-13, 1e15] g cm⁻³,
 * T ∈ [1e3, 1e13] K): P, U, S and the per-species values ≤ 3e-14 relative; first derivatives
 * ≤ 5e-13 relative. Neutrality is met to ≤ 1e-13 of n₋ + n₊ everywhere in that domain.
 */

import { AVOGADRO, BOLTZMANN_K, ELECTRON_REST_ENERGY, PAIR_DENSITY_K, PLANCK_H, ELECTRON_MASS, SPEED_OF_LIGHT } from './constants.js';
import {
  FD_DBETA,
  FD_DETA,
  FD_ENTROPY,
  FD_ENTROPY_OFFSET,
  FD_FAST,
  FD_F,
  FD_LIGHT,
  FD_SECOND,
  FD_SET_LENGTH,
  SOMMERFELD_ETA,
  generalizedFermiDiracSet,
} from './fermi-dirac.js';

export interface PairSpecies {
  pressure: number;
  dPdD: number;
  dPdT: number;
  energy: number;
  dUdD: number;
  dUdT: number;
  entropy: number;
  dSdD: number;
  dSdT: number;
}

export interface PairGasState {
  /** η = (μ_e − m_e c²)/(k_B T) and its derivatives ∂η/∂d|_T, ∂η/∂T|_d. */
  eta: number;
  detaDd: number;
  detaDT: number;
  /** n₋, n₊ [cm⁻³]. */
  electronDensity: number;
  positronDensity: number;
  /** Total pair pressure [erg cm⁻³]. */
  pressure: number;
  dPdD: number;
  dPdT: number;
  /** Energy per unit volume [erg cm⁻³]: U₋ + U₊ + 2 m_e c² n₊. */
  energy: number;
  dUdD: number;
  dUdT: number;
  /** Entropy per unit volume [erg cm⁻³ K⁻¹]. */
  entropy: number;
  dSdD: number;
  dSdT: number;
  electrons: PairSpecies;
  positrons: PairSpecies;
  /** Newton iterations of the neutrality solve. */
  iterations: number;
}

/** pairGas succeeded. */
export const PAIR_OK = 0;
/** d or T not finite and positive; the state is filled with NaN. */
export const PAIR_BAD_INPUT = 1;
/** The neutrality solve did not converge (not expected anywhere in the domain); state holds NaN. */
export const PAIR_NO_CONVERGENCE = 2;

function createSpecies(): PairSpecies {
  return { pressure: 0, dPdD: 0, dPdT: 0, energy: 0, dUdD: 0, dUdT: 0, entropy: 0, dSdD: 0, dSdT: 0 };
}

export function createPairGasState(): PairGasState {
  return {
    eta: 0,
    detaDd: 0,
    detaDT: 0,
    electronDensity: 0,
    positronDensity: 0,
    pressure: 0,
    dPdD: 0,
    dPdT: 0,
    energy: 0,
    dUdD: 0,
    dUdT: 0,
    entropy: 0,
    dSdD: 0,
    dSdT: 0,
    electrons: createSpecies(),
    positrons: createSpecies(),
    iterations: 0,
  };
}

const MEC2 = ELECTRON_REST_ENERGY;
const K = PAIR_DENSITY_K;
/** (m_e c/h) for the zero-temperature Fermi momentum x_F = (3n/(8π))^{1/3} h/(m_e c). */
const COMPTON_INV = (ELECTRON_MASS * SPEED_OF_LIGHT) / PLANCK_H;

// scratch (no allocation per call)
const fdE = new Float64Array(FD_SET_LENGTH);
const fdP = new Float64Array(FD_SET_LENGTH);

/**
 * Per-species quantities as functions of the species' own η_s and of β, all divided by K β^{3/2}
 * (densities as they are, P and U in units of k_B T, S in units of k_B). Index: 0 n, 1 n_η, 2 n_β,
 * 3 p, 4 p_η, 5 p_β, 6 u, 7 u_η, 8 u_β, 9 s, 10 s_η, 11 s_β, 12–15 the second η-derivatives of
 * n, p, u, s, 16–19 their mixed ηβ-derivatives. "_β" is (1/Kβ^{3/2}) ∂(Kβ^{3/2}·q)/∂β.
 */
const SP_LEN = 20;
const spE = new Float64Array(SP_LEN);
const spP = new Float64Array(SP_LEN);

function speciesFromSet(fd: Float64Array, beta: number, etaS: number, fromG: boolean, sp: Float64Array): void {
  const c = 1.5 / beta; // ∂ ln β^{3/2}/∂β
  const F12 = fd[0], F12e = fd[1], F12b = fd[2], F12ee = fd[3], F12eb = fd[4];
  const F32 = fd[6], F32e = fd[7], F32b = fd[8], F32ee = fd[9], F32eb = fd[10];
  const F52 = fd[12], F52e = fd[13], F52b = fd[14], F52ee = fd[15], F52eb = fd[16];
  const n = F12 + beta * F32;
  const ne = F12e + beta * F32e;
  sp[0] = n;
  sp[1] = ne;
  sp[2] = c * n + F12b + F32 + beta * F32b;
  sp[12] = F12ee + beta * F32ee;
  sp[16] = c * ne + F12eb + F32e + beta * F32eb;
  const t = 2 / 3;
  const pp = t * (F32 + 0.5 * beta * F52);
  const pe = t * (F32e + 0.5 * beta * F52e);
  sp[3] = pp;
  sp[4] = pe;
  sp[5] = c * pp + t * (F32b + 0.5 * F52 + 0.5 * beta * F52b);
  sp[13] = t * (F32ee + 0.5 * beta * F52ee);
  sp[17] = c * pe + t * (F32eb + 0.5 * F52e + 0.5 * beta * F52eb);
  const u = F32 + beta * F52;
  const ue = F32e + beta * F52e;
  sp[6] = u;
  sp[7] = ue;
  sp[8] = c * u + F32b + F52 + beta * F52b;
  sp[14] = F32ee + beta * F52ee;
  sp[18] = c * ue + F32eb + F52e + beta * F52eb;
  if (fromG) {
    const o = FD_ENTROPY_OFFSET;
    const G12 = fd[o], G12e = fd[o + 1], G12b = fd[o + 2], G12ee = fd[o + 3], G12eb = fd[o + 4];
    const G32 = fd[o + 5], G32e = fd[o + 6], G32b = fd[o + 7], G32ee = fd[o + 8], G32eb = fd[o + 9];
    const sv = G12 + beta * G32;
    const se = G12e + beta * G32e;
    sp[9] = sv;
    sp[10] = se;
    sp[11] = c * sv + G12b + G32 + beta * G32b;
    sp[15] = G12ee + beta * G32ee;
    sp[19] = c * se + G12eb + G32e + beta * G32eb;
  } else {
    // S/(k K β^{3/2}) = u + p − η_s n
    sp[9] = u + pp - etaS * n;
    sp[10] = ue + pe - n - etaS * ne;
    sp[11] = sp[8] + sp[5] - etaS * sp[2];
    sp[15] = sp[14] + sp[13] - 2 * ne - etaS * sp[12];
    sp[19] = sp[18] + sp[17] - sp[2] - etaS * sp[16];
  }
}

/**
 * One species at (η_s, β): the integrals with first and second derivatives, then n, P, U, S. The
 * entropy integrals are needed only where the gas is degenerate enough (η_s ≥ SOMMERFELD_ETA) for
 * U + P − η_s k T n to cancel badly; there they come from the Sommerfeld series at no extra cost.
 * Below, S = (U + P − η_s k T n)/T loses at most ~η_s² ≤ 1600 ulp.
 */
function evaluateSpecies(etaS: number, beta: number, fd: Float64Array, sp: Float64Array): void {
  const sommerfeld = etaS >= SOMMERFELD_ETA;
  generalizedFermiDiracSet(etaS, beta, fd, sommerfeld ? FD_SECOND | FD_ENTROPY : FD_SECOND | FD_FAST);
  speciesFromSet(fd, beta, etaS, sommerfeld, sp);
}

/** Moves a species by Δ in its own η: values to second order, derivatives to first order. */
function shiftSpecies(sp: Float64Array, d: number): void {
  if (d === 0) return;
  const h = 0.5 * d * d;
  for (let q = 0; q < 4; q++) {
    const v = 3 * q; // n, p, u, s at 0, 3, 6, 9
    sp[v] += sp[v + 1] * d + sp[12 + q] * h;
    sp[v + 1] += sp[12 + q] * d;
    sp[v + 2] += sp[16 + q] * d;
  }
}

/** √π/2: Γ(3/2). */
const GAMMA_3_2 = 0.886226925452758;

/**
 * Rough non-degenerate value of (F½ + βF3/2)e^{−η} = ∫ x^{1/2}(1+βx)(1+βx/2)^{1/2} e^{−x} dx, exact in
 * both limits (Γ(3/2) as β → 0, √2 β^{3/2}·Γ(3)/√… as β → ∞) and within ~20 % between; only used for
 * starting guesses and for deciding whether positrons matter.
 */
function nondegenerateDensityFactor(beta: number): number {
  const a = 1 + 1.366 * beta;
  return GAMMA_3_2 * a * Math.sqrt(a);
}

/** ln of n/(K β^{3/2}) of a non-degenerate species at η_s, bounded above. */
function logDensityBound(etaS: number, beta: number): number {
  return etaS + Math.log(2 * nondegenerateDensityFactor(beta));
}

/** Starting η from the non-degenerate (with pairs) and the zero-temperature degenerate limits. */
function initialEta(n0: number, beta: number): number {
  // degenerate: kinetic Fermi energy over kT
  const xF = Math.cbrt((3 * n0) / (8 * Math.PI)) / COMPTON_INV;
  const epsF = (xF * xF) / (Math.sqrt(1 + xF * xF) + 1); // kinetic Fermi energy / m c²
  // first Sommerfeld correction: μ ≈ E_F − (π²/6)(kT)² d ln D/dE at E_F, D ∝ p (1 + ε)
  const dlnD = (1 + epsF) / (epsF * (epsF + 2)) + 1 / (1 + epsF);
  const etaDeg = epsF / beta - ((Math.PI * Math.PI) / 6) * beta * dlnD;
  // non-degenerate with pairs: n0 = 2 A e^{−1/β} sinh(η + 1/β), A = Kβ^{3/2}·factor
  const logA = Math.log(K * Math.pow(beta, 1.5) * nondegenerateDensityFactor(beta));
  const logZ = Math.log(n0 / 2) - logA + 1 / beta; // z = n0 e^{1/β}/(2A)
  const asinhZ = logZ > 20 ? logZ + Math.LN2 : Math.asinh(Math.exp(logZ));
  const etaNd = asinhZ - 1 / beta;
  if (etaDeg > 2 && etaDeg > etaNd) return etaDeg;
  return etaNd;
}

/**
 * Whether positrons can matter at η: they are skipped when even their largest share of any output
 * stays below 1e-18 — their density relative to the electrons' (≥ d N_A), times (2/β + |η₊|)³ for
 * the rest mass and the temperature derivatives, times η for the electrons' entropy, which is
 * suppressed ∝ 1/η when degenerate. logTarget = ln(d N_A/(K β^{3/2})).
 */
function positronMatters(eta: number, beta: number, logTarget: number): boolean {
  const twoOverBeta = 2 / beta;
  return (
    logDensityBound(-eta - twoOverBeta, beta) +
      3 * Math.log(3 + twoOverBeta + Math.abs(eta + twoOverBeta)) +
      Math.log(Math.max(1, eta)) -
      logTarget >
    LOG_POSITRON_NEGLIGIBLE
  );
}

// positron contributions are skipped when they are below this fraction of the electrons', counted
// generously (energy and entropy carry factors up to ~(2/β + |η₊|)²)
const LOG_POSITRON_NEGLIGIBLE = Math.log(1e-18);

/** Densities of the last light evaluation, divided by K β^{3/2}: n₋, ∂n₋/∂η, n₊, ∂n₊/∂η₊. */
let lastNe = 0;
let lastNeEta = 0;
let lastNp = 0;
let lastNpEta = 0;

function densities(eta: number, beta: number, withPositrons: boolean): void {
  generalizedFermiDiracSet(eta, beta, fdE, FD_LIGHT);
  lastNe = fdE[FD_F] + beta * fdE[6 + FD_F];
  lastNeEta = fdE[FD_DETA] + beta * fdE[6 + FD_DETA];
  if (withPositrons) {
    generalizedFermiDiracSet(-eta - 2 / beta, beta, fdP, FD_LIGHT);
    lastNp = fdP[FD_F] + beta * fdP[6 + FD_F];
    lastNpEta = fdP[FD_DETA] + beta * fdP[6 + FD_DETA];
  } else {
    lastNp = 0;
    lastNpEta = 0;
  }
}

function fillNaN(out: PairGasState): void {
  const keys: (keyof PairSpecies)[] = ['pressure', 'dPdD', 'dPdT', 'energy', 'dUdD', 'dUdT', 'entropy', 'dSdD', 'dSdT'];
  for (const k of keys) {
    out[k] = NaN;
    out.electrons[k] = NaN;
    out.positrons[k] = NaN;
  }
  out.eta = out.detaDd = out.detaDT = out.electronDensity = out.positronDensity = NaN;
}

const MAX_ITERATIONS = 200;
/** Light Newton steps stop below this relative step (the full evaluation then corrects to 2nd order). */
const LIGHT_TOLERANCE = 1e-3;
/**
 * The full evaluation is accepted when the remaining step is below this (relative to max(1, η)):
 * second-order Taylor shifts then leave ≲ 1e-15 in the values and ≲ 1e-10 in the derivatives.
 */
const FINAL_TOLERANCE = 1e-5;

/**
 * The pair gas at d = ρ·Ye [g cm⁻³] (n₋ − n₊ = d·N_A) and T [K]. Fills `out`; returns PAIR_OK, or
 * PAIR_BAD_INPUT / PAIR_NO_CONVERGENCE (then `out` holds NaN). `etaGuess` is an optional warm start.
 */
export function pairGas(d: number, T: number, out: PairGasState, etaGuess?: number): number {
  if (!(d > 0) || !(T > 0) || !Number.isFinite(d) || !Number.isFinite(T)) {
    fillNaN(out);
    out.iterations = 0;
    return PAIR_BAD_INPUT;
  }
  const beta = (BOLTZMANN_K * T) / MEC2;
  const scale = K * beta * Math.sqrt(beta); // densities are carried divided by this
  const n0 = d * AVOGADRO;
  const target = n0 / scale;
  const logTarget = Math.log(target);
  const twoOverBeta = 2 / beta;

  // a warm start is used unless the gas is clearly degenerate, where the asymptotic guess (exact
  // to O(η⁻⁴)) beats the η of any neighbouring point
  const cold = initialEta(n0, beta);
  const warm = etaGuess !== undefined && Number.isFinite(etaGuess) && !(cold > 10);
  let eta = warm ? (etaGuess as number) : cold;
  let iterations = 0;
  // deep in the degenerate regime the corrected asymptotic guess is already within the final
  // tolerance: go straight to the full evaluation
  let skipLight = !warm && cold > 30;
  let lo = -Infinity;
  let hi = Infinity;
  let positronsOn = false;
  let deta = 0;
  for (;;) {
    if (!skipLight) {
      // Newton with light evaluations (n and ∂n/∂η only, ~1e-11 accurate) on
      // φ(η) = ln n₋ − ln(n₊ + d N_A), nearly linear where n ∝ e^{±η} (non-degenerate or pair
      // dominated) and concave where degenerate. Bracketed: a step that leaves [lo, hi] is replaced
      // by bisection (or by an expansion while the bracket is open). The light loop only has to
      // bring η within LIGHT_TOLERANCE; the full evaluation finishes exactly.
      let done = false;
      while (iterations < MAX_ITERATIONS) {
        iterations++;
        densities(eta, beta, positronMatters(eta, beta, logTarget));
        const rest = lastNp + target;
        const res = Math.log(lastNe) - Math.log(rest);
        const dres = lastNeEta / lastNe + lastNpEta / rest;
        if (res > 0) hi = Math.min(hi, eta);
        else if (res < 0) lo = Math.max(lo, eta);
        const step = -res / dres;
        if (Math.abs(step) <= LIGHT_TOLERANCE * Math.max(1, eta)) {
          eta += step;
          done = true;
          break;
        }
        let next = eta + step;
        if (!(next > lo && next < hi) || !Number.isFinite(next)) {
          if (Number.isFinite(lo) && Number.isFinite(hi)) next = 0.5 * (lo + hi);
          else if (res > 0) next = eta - Math.max(10, 2 * Math.abs(eta));
          else next = eta + Math.max(10, 2 * Math.abs(eta));
        }
        eta = next;
        if (Number.isFinite(lo) && Number.isFinite(hi) && hi - lo <= 1e-15 * Math.max(1, Math.abs(eta))) {
          done = true;
          break;
        }
      }
      if (!done) {
        fillNaN(out);
        out.iterations = iterations;
        return PAIR_NO_CONVERGENCE;
      }
    }
    skipLight = false;
    // full evaluation (integrals with first and second derivatives)
    iterations++;
    positronsOn = positronMatters(eta, beta, logTarget);
    evaluateSpecies(eta, beta, fdE, spE);
    if (positronsOn) evaluateSpecies(-eta - twoOverBeta, beta, fdP, spP);
    else spP.fill(0);
    // neutrality to second order: N + N'Δ + ½N''Δ² = target (∂η₊/∂η = −1)
    const r = spE[0] - spP[0] - target;
    const N1 = spE[1] + spP[1];
    const N2 = spE[12] - spP[12];
    const d0 = -r / N1;
    deta = -(r + 0.5 * N2 * d0 * d0) / N1;
    if (Math.abs(deta) <= FINAL_TOLERANCE * Math.max(1, eta)) break;
    // too far for the Taylor correction (a poor warm start): a Newton step in the same form as the
    // light iterations (logarithmic unless pairs dominate), then light iterations again
    if (r > 0) hi = Math.min(hi, eta);
    else lo = Math.max(lo, eta);
    {
      const rest = spP[0] + target;
      const phi = Math.log(spE[0]) - Math.log(rest);
      const step = -phi / (spE[1] / spE[0] + spP[1] / rest);
      const next = eta + step;
      eta = next > lo && next < hi ? next : Number.isFinite(lo) && Number.isFinite(hi) ? 0.5 * (lo + hi) : eta + d0;
    }
    if (iterations >= MAX_ITERATIONS || !Number.isFinite(eta)) {
      fillNaN(out);
      out.iterations = iterations;
      return PAIR_NO_CONVERGENCE;
    }
  }
  // move every output to the solved η: values to second order, derivatives to first order
  eta += deta;
  shiftSpecies(spE, deta);
  if (positronsOn) shiftSpecies(spP, -deta);

  const kT = BOLTZMANN_K * T;
  const betaT = beta / T; // ∂β/∂T
  // totals as functions of (η, β), with η₊ = −η − 2/β (∂η₊/∂η = −1, ∂η₊/∂β = 2/β²)
  const dEtaPdBeta = twoOverBeta / beta;
  const Neta = spE[1] + spP[1];
  const Nbeta = spE[2] - spP[2] - spP[1] * dEtaPdBeta;
  // neutrality: ∂η/∂d|_T and ∂η/∂T|_d
  const detaDd = AVOGADRO / (scale * Neta);
  const detaDT = (-Nbeta * betaT) / Neta;

  out.eta = eta;
  out.detaDd = detaDd;
  out.detaDT = detaDT;
  out.electronDensity = scale * spE[0];
  out.positronDensity = scale * spP[0];

  fillSpecies(out.electrons, spE, scale, kT, T, 1, 0, detaDd, detaDT, betaT, 0);
  fillSpecies(out.positrons, spP, scale, kT, T, -1, dEtaPdBeta, detaDd, detaDT, betaT, positronsOn ? 1 : 0);

  const e = out.electrons;
  const p = out.positrons;
  out.pressure = e.pressure + p.pressure;
  out.energy = e.energy + p.energy;
  out.entropy = e.entropy + p.entropy;
  // ∂P/∂d|_T from Gibbs–Duhem (∂P_s/∂η_s|_T = kT n_s for each species, so ∂P/∂η|_T = kT(n₋ − n₊)
  // = kT·d·N_A exactly): the sum of the species' terms cancels to nothing where pairs dominate
  out.dPdD = kT * d * AVOGADRO * detaDd;
  e.dPdD = out.dPdD - p.dPdD;
  out.dUdD = e.dUdD + p.dUdD;
  out.dSdD = e.dSdD + p.dSdD;
  out.dSdT = e.dSdT + p.dSdT;
  if (eta > 0) {
    // degenerate: exact identities instead of the cancelling chain (see the header); the positrons
    // are non-degenerate here (η₊ < 0), so their direct chain is fine and the electrons get the rest
    out.dPdT = out.entropy - d * out.dSdD;
    out.dUdT = T * out.dSdT;
    e.dPdT = out.dPdT - p.dPdT;
    e.dUdT = out.dUdT - p.dUdT;
  } else {
    out.dPdT = e.dPdT + p.dPdT;
    out.dUdT = e.dUdT + p.dUdT;
  }
  out.iterations = iterations;
  return PAIR_OK;
}

/**
 * Fills one species' outputs from its (η_s, β) functions. sign = ∂η_s/∂η (+1 electrons, −1
 * positrons); dEtaSdBeta = ∂η_s/∂β at fixed η; restMass: 1 to add 2 m_e c² n (positrons).
 */
function fillSpecies(
  o: PairSpecies,
  sp: Float64Array,
  scale: number,
  kT: number,
  T: number,
  sign: number,
  dEtaSdBeta: number,
  detaDd: number,
  detaDT: number,
  betaT: number,
  restMass: number,
): void {
  // chain through η_s(η, β): dQ/dη = Q_{η_s}·sign; dQ/dβ|_η = Q_β + Q_{η_s}·dEtaSdBeta, where the
  // β-derivatives in sp already include the β^{3/2} of scale
  const n = scale * sp[0];
  const nEta = scale * sp[1] * sign;
  const nBeta = scale * (sp[2] + sp[1] * dEtaSdBeta);
  // P = kT·scale·p: ∂/∂β picks up kT/β from kT = m c² β
  const P = kT * scale * sp[3];
  const PEta = kT * scale * sp[4] * sign;
  const beta = betaT * T;
  // P = kT·scale·p with kT = m c² β: ∂P/∂β = kT ∂(scale·p)/∂β + P/β
  const PBetaFull = kT * scale * (sp[5] + sp[4] * dEtaSdBeta) + P / beta;
  const U = kT * scale * sp[6];
  const UEta = kT * scale * sp[7] * sign;
  const UBetaFull = kT * scale * (sp[8] + sp[7] * dEtaSdBeta) + U / beta;
  const S = BOLTZMANN_K * scale * sp[9];
  const SEta = BOLTZMANN_K * scale * sp[10] * sign;
  const SBeta = BOLTZMANN_K * scale * (sp[11] + sp[10] * dEtaSdBeta);
  o.pressure = P;
  o.dPdD = PEta * detaDd;
  o.dPdT = PEta * detaDT + PBetaFull * betaT;
  const rm = restMass * 2 * MEC2;
  o.energy = U + rm * n;
  o.dUdD = (UEta + rm * nEta) * detaDd;
  o.dUdT = (UEta + rm * nEta) * detaDT + (UBetaFull + rm * nBeta) * betaT;
  o.entropy = S;
  o.dSdD = SEta * detaDd;
  o.dSdT = SEta * detaDT + SBeta * betaT;
}
