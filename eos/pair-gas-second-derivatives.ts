/**
 * Higher derivatives of the ideal electron–positron gas in (d = ρ·Ye, T): everything the
 * free-energy table of Timmes & Swesty (2000, ApJS 126, 501) needs at a node — the Helmholtz free
 * energy per unit mass of ρYe, f = (U − TS)/d = N_A k T η − P/d, with f_d, f_T, f_dd, f_TT, f_dT,
 * f_ddT, f_dTT, f_ddTT — plus η, the positron quantities and their mixed (d, T) derivatives.
 *
 * Method (all analytic, no finite differences). The values and first derivatives come from
 * electron-positron.ts (`pairGas`). With σ = S/d the entropy per unit mass of ρYe, f_T = −σ, so
 *   f_dT = −σ_d, f_ddT = −σ_dd, f_TT = −σ_T, f_dTT = −σ_dT, f_ddTT = −σ_ddT,
 * and f_d = P/d², f_dd = k T N_A η_d/d − 2P/d³ (from ∂P/∂η|_T = k T N, Gibbs–Duhem). σ is chained
 * through neutrality N(η, T) = d N_A:
 *   η_d = N_A/N_η, η_T = −N_T/N_η, η_dd = −N_ηη η_d²/N_η, η_dT = −(N_ηη η_T + N_ηT) η_d/N_η,
 *   η_ddT = −[(N_ηηη η_T + N_ηηT) η_d² + 2 N_ηη η_d η_dT + η_dd (N_ηη η_T + N_ηT)]/N_η,
 * which needs the integrals' (η, β) derivatives up to ∂³/∂η³ and ∂³/∂η²∂β but never ∂²/∂β².
 * Orders ≤ 2 come from fermi-dirac.ts (`generalizedFermiDiracSet`; the entropy integrals G_k where
 * a species is degenerate, η_s ≥ 40, as in electron-positron.ts). The third-order ones are
 * computed here by Gauss–Legendre quadrature of the η-derivatives of the occupation f and of the
 * per-state entropy σ(y) = −f ln f − (1−f) ln(1−f), y = x − η (with g = f(1−f), τ = tanh(y/2)):
 *   ∂²f/∂η² = g τ, ∂³f/∂η³ = g(1 − 6g), ∂²σ/∂η² = g(y τ − 1), ∂³σ/∂η³ = y g(1 − 6g) − 2 g τ,
 * against the weight w(x) = x^{1/2}(1 + βx)(1 + βx/2)^{1/2} of n/(Kβ^{3/2}) = F_{1/2} + βF_{3/2}
 * (and of S/(k K β^{3/2}) = G_{1/2} + βG_{3/2}) and its β-derivative. All of them carry the factor
 * g ≤ e^{−|y|}, so the range is |y| ≤ 50; panels of width 2 in x where η_s > 52, else panels in
 * t = √x of width ≤ 0.2, graded geometrically towards t = 0 when the branch point t = i(2/β)^{1/2}
 * of the weight comes close; 10 nodes per panel.
 *
 * Accuracy: the same quadrature applied to the second-order kernels reproduces fermi-dirac.ts's
 * ∂²n/∂η², ∂²n/∂η∂β to ≤ 4e-11 (worst near η = 45, where the direct kernels lose ~η² ulp; ≤ 2e-15
 * elsewhere, tests/eos/free-energy-table.test.ts); f_ddT, f_ddTT match differences of f_dT, f_dTT to O(h²);
 * they enter only f_ddTT, whose weight in the biquintic interpolant is ~1e-7 of f, so the table's
 * accuracy (see free-energy-table.ts) is set by the interpolation, not by these derivatives.
 */

import { AVOGADRO, BOLTZMANN_K, ELECTRON_REST_ENERGY, PAIR_DENSITY_K } from './constants.js';
import { createPairGasState, pairGas, PAIR_OK, type PairGasState } from './electron-positron.js';
import { gaussLegendre, FD_ENTROPY, FD_ENTROPY_OFFSET, FD_FAST, FD_SECOND, FD_SET_LENGTH, SOMMERFELD_ETA, generalizedFermiDiracSet } from './fermi-dirac.js';

// ---------------------------------------------------------------------------------------------
// Output layout of pairGasNode (all in CGS; d = ρYe in g/cm³, per unit "mass of ρYe" = per d).

export const NODE_F = 0;
export const NODE_FD = 1;
export const NODE_FT = 2;
export const NODE_FDD = 3;
export const NODE_FDT = 4;
export const NODE_FTT = 5;
export const NODE_FDDT = 6;
export const NODE_FDTT = 7;
export const NODE_FDDTT = 8;
export const NODE_ETA = 9;
export const NODE_ETA_D = 10;
export const NODE_ETA_T = 11;
export const NODE_ETA_DT = 12;
/** Positron number density n₊ and ∂/∂d, ∂/∂T, ∂²/∂d∂T. */
export const NODE_NP = 13;
/** Positron pressure P₊ (and 3 derivatives as above). */
export const NODE_PP = 17;
/** Positron energy density U₊ including the pair rest mass 2 m_e c² n₊ (and 3 derivatives). */
export const NODE_UP = 21;
/** Positron entropy density S₊ (and 3 derivatives). */
export const NODE_SP = 25;
/** ∂²η/∂d² and ∂³η/∂d²∂T (for the table's ∂P/∂d = N_A k T d η_d, interpolated as ln(d η_d)). */
export const NODE_ETA_DD = 29;
export const NODE_ETA_DDT = 30;
/** Total pair-gas P, U, S per volume (as pairGas) with their d, T derivatives: P, P_d, P_T, U, U_d, U_T, S, S_d, S_T. */
export const NODE_TOTALS = 31;
export const NODE_LENGTH = 40;

const K = PAIR_DENSITY_K;
const MEC2 = ELECTRON_REST_ENERGY;

// ---------------------------------------------------------------------------------------------
// Third-order integrals by quadrature

const GL_N = 10;
const { x: GL_X, w: GL_W } = gaussLegendre(GL_N);

/** Half-width of the y = x − η range (g ≤ e^{−|y|}). */
const Y_RANGE = 50;

/**
 * Raw third-order integrals of one species at its own η_s and β (divided by K β^{3/2}, entropy in
 * units of k): out[0] = ∂³n/∂η³, out[1] = ∂³n/∂η²∂β, out[2] = ∂³s/∂η³, out[3] = ∂³s/∂η²∂β, and, for
 * checking, out[4] = ∂²n/∂η², out[5] = ∂²n/∂η∂β (β-derivatives at fixed η, of the bracket only).
 */
export function thirdOrderIntegrals(eta: number, beta: number, out: Float64Array): void {
  for (let i = 0; i < 6; i++) out[i] = 0;
  if (eta < -700) return; // underflows like e^η (as fermi-dirac.ts)
  if (eta > Y_RANGE + 2) {
    // Degenerate: by parts, ∫ h ∂^m f/∂η^m dx = h^{(m−1)}(η) + ∫ h^{(m)} (f − θ(η − x)) dx and
    // ∫ h ∂^m σ/∂η^m dx = ∫ h^{(m)} σ dx (the Sommerfeld split), which avoids the loss of ~η² digits
    // of integrating the oscillating kernels directly. Panels of width 2 meet x = η at a boundary.
    weightDerivatives(eta, beta);
    out[0] = wd[2];
    out[1] = wd[5];
    out[4] = wd[1];
    out[5] = wd[4];
    const a = eta - Y_RANGE;
    for (let p = 0; p < Y_RANGE; p++) {
      const x0 = a + 2 * p;
      for (let q = 0; q < GL_N; q++) {
        const x = x0 + 1 + GL_X[q];
        const y = x - eta;
        const e = Math.exp(-Math.abs(y));
        const fm = ((y > 0 ? 1 : -1) * e) / (1 + e);
        const sig = Math.log1p(e) + (Math.abs(y) * e) / (1 + e);
        weightDerivatives(x, beta);
        const wq = GL_W[q];
        out[0] += wq * wd[3] * fm;
        out[1] += wq * wd[6] * fm;
        out[2] += wq * wd[3] * sig;
        out[3] += wq * wd[6] * sig;
        out[4] += wq * wd[2] * fm;
        out[5] += wq * wd[5] * fm;
      }
    }
    return;
  }
  const tMax = Math.sqrt(Math.max(eta, 0) + Y_RANGE);
  const hMax = 0.2;
  const delta = Math.sqrt(2 / beta); // branch point of the weight at t = ±iδ
  let t0 = 0;
  let h = Math.min(hMax, 0.5 * delta);
  while (t0 < tMax) {
    const t1 = Math.min(tMax, t0 + h);
    const half = 0.5 * (t1 - t0);
    const mid = 0.5 * (t1 + t0);
    for (let q = 0; q < GL_N; q++) {
      const t = mid + half * GL_X[q];
      accumulate(t * t, eta, beta, GL_W[q] * half * 2 * t, out);
    }
    t0 = t1;
    // geometric grading away from the origin: the next panel no wider than its distance to 0
    h = Math.min(hMax, Math.max(h, 0.6 * t0));
  }
}

/** x-derivatives of the weights: wd = [w, w', w'', w''', w_β, w_β', w_β''] at x. */
const wd = new Float64Array(7);
function weightDerivatives(x: number, beta: number): void {
  const sq = Math.sqrt(x);
  const A = sq, A1 = 0.5 / sq, A2 = -0.25 / (x * sq), A3 = 0.375 / (x * x * sq);
  const B = 1 + beta * x;
  const AB = A * B, AB1 = A1 * B + A * beta, AB2 = A2 * B + 2 * A1 * beta, AB3 = A3 * B + 3 * A2 * beta;
  const z = 1 + 0.5 * beta * x;
  const C = Math.sqrt(z);
  const Ci = 1 / C;
  const C1 = 0.25 * beta * Ci, C2 = (-beta * beta * Ci) / (16 * z), C3 = (3 * beta * beta * beta * Ci) / (64 * z * z);
  wd[0] = AB * C;
  wd[1] = AB1 * C + AB * C1;
  wd[2] = AB2 * C + 2 * AB1 * C1 + AB * C2;
  wd[3] = AB3 * C + 3 * AB2 * C1 + 3 * AB1 * C2 + AB * C3;
  // w_β = D E, D = x^{3/2}, E = C + B/(4C)
  const D = x * sq, D1 = 1.5 * sq, D2 = 0.75 / sq;
  const Ci1 = (-0.25 * beta * Ci) / z, Ci2 = (3 * beta * beta * Ci) / (16 * z * z);
  const E = C + 0.25 * B * Ci, E1 = C1 + 0.25 * (beta * Ci + B * Ci1), E2 = C2 + 0.25 * (2 * beta * Ci1 + B * Ci2);
  wd[4] = D * E;
  wd[5] = D1 * E + D * E1;
  wd[6] = D2 * E + 2 * D1 * E1 + D * E2;
}

function accumulate(x: number, eta: number, beta: number, wq: number, out: Float64Array): void {
  const y = x - eta;
  const e = Math.exp(-Math.abs(y));
  const onePlus = 1 + e;
  const g = e / (onePlus * onePlus);
  const tau = y >= 0 ? (1 - e) / onePlus : -(1 - e) / onePlus;
  const f2 = g * tau;
  const f3 = g * (1 - 6 * g);
  const s2 = g * (y * tau - 1);
  const s3 = y * f3 - 2 * g * tau;
  const sq = Math.sqrt(x);
  const r = Math.sqrt(1 + 0.5 * beta * x);
  const w = sq * (1 + beta * x) * r;
  const wb = x * sq * r + (sq * (1 + beta * x) * 0.25 * x) / r;
  out[0] += wq * w * f3;
  out[1] += wq * wb * f2;
  out[2] += wq * w * s3;
  out[3] += wq * wb * s2;
  out[4] += wq * w * f2;
  out[5] += wq * wb * (g);
}

// ---------------------------------------------------------------------------------------------
// Per-species (η_s, β) partials (brackets divided by K β^{3/2}; p, u in units of kT, s of k)

/** Per species: n: 0..6 = [v, η, ηη, ηηη, β, ηβ, ηηβ]; s: 7..13 same; p: 14..18 = [v, η, ηη, β, ηβ]; u: 19..23. */
const SPEC_LEN = 24;
const fd = new Float64Array(FD_SET_LENGTH);
const third = new Float64Array(6);
const spE = new Float64Array(SPEC_LEN);
const spP = new Float64Array(SPEC_LEN);

function species(etaS: number, beta: number, sp: Float64Array): void {
  if (etaS < -700) {
    sp.fill(0);
    return;
  }
  const degenerate = etaS >= SOMMERFELD_ETA;
  generalizedFermiDiracSet(etaS, beta, fd, degenerate ? FD_SECOND | FD_ENTROPY : FD_SECOND | FD_FAST);
  const F12 = fd[0], F12e = fd[1], F12b = fd[2], F12ee = fd[3], F12eb = fd[4];
  const F32 = fd[6], F32e = fd[7], F32b = fd[8], F32ee = fd[9], F32eb = fd[10];
  const F52 = fd[12], F52e = fd[13], F52b = fd[14], F52ee = fd[15], F52eb = fd[16];
  thirdOrderIntegrals(etaS, beta, third);
  const n = F12 + beta * F32, ne = F12e + beta * F32e, nee = F12ee + beta * F32ee;
  const nb = F12b + F32 + beta * F32b, neb = F12eb + F32e + beta * F32eb;
  sp[0] = n; sp[1] = ne; sp[2] = nee; sp[3] = third[0]; sp[4] = nb; sp[5] = neb; sp[6] = third[1];
  const t = 2 / 3;
  const p = t * (F32 + 0.5 * beta * F52), pe = t * (F32e + 0.5 * beta * F52e), pee = t * (F32ee + 0.5 * beta * F52ee);
  const pb = t * (F32b + 0.5 * F52 + 0.5 * beta * F52b), peb = t * (F32eb + 0.5 * F52e + 0.5 * beta * F52eb);
  sp[14] = p; sp[15] = pe; sp[16] = pee; sp[17] = pb; sp[18] = peb;
  const u = F32 + beta * F52, ue = F32e + beta * F52e, uee = F32ee + beta * F52ee;
  const ub = F32b + F52 + beta * F52b, ueb = F32eb + F52e + beta * F52eb;
  sp[19] = u; sp[20] = ue; sp[21] = uee; sp[22] = ub; sp[23] = ueb;
  if (degenerate) {
    const o = FD_ENTROPY_OFFSET;
    sp[7] = fd[o] + beta * fd[o + 5];
    sp[8] = fd[o + 1] + beta * fd[o + 6];
    sp[9] = fd[o + 3] + beta * fd[o + 8];
    sp[11] = fd[o + 2] + fd[o + 5] + beta * fd[o + 7];
    sp[12] = fd[o + 4] + fd[o + 6] + beta * fd[o + 9];
  } else {
    // s = u + p − η_s n (in units of k)
    sp[7] = u + p - etaS * n;
    sp[8] = ue + pe - n - etaS * ne;
    sp[9] = uee + pee - 2 * ne - etaS * nee;
    sp[11] = ub + pb - etaS * nb;
    sp[12] = ueb + peb - nb - etaS * neb;
  }
  sp[10] = third[2];
  sp[13] = third[3];
}

// ---------------------------------------------------------------------------------------------
// Chain rules

/** Partials of a total quantity Q(η, T): [Q, Q_η, Q_ηη, Q_ηηη, Q_T, Q_ηT, Q_ηηT] (T at fixed η). */
const qN = new Float64Array(7);
const qS = new Float64Array(7);
const qX = new Float64Array(7);

/**
 * Adds sign·C(β)·X(η_s(η, β), β) into q, X a species bracket at sp[o..]: full (7 entries) or short
 * (5 entries: v, η, ηη, β, ηβ). C = c0 β^m. Positrons: η_s = −η − 2/β.
 */
function addSpecies(
  q: Float64Array, sp: Float64Array, o: number, full: boolean, positron: boolean, sign: number, c0: number, m: number,
  beta: number, T: number,
): void {
  const v = sp[o], xs = sp[o + 1], xss = sp[o + 2];
  const xsss = full ? sp[o + 3] : 0;
  const xb = full ? sp[o + 4] : sp[o + 3];
  const xsb = full ? sp[o + 5] : sp[o + 4];
  const xssb = full ? sp[o + 6] : 0;
  const sg = positron ? -1 : 1; // ∂η_s/∂η
  const c = positron ? 2 / (beta * beta) : 0; // ∂η_s/∂β
  // Y(η, β) = X(η_s(η, β), β)
  const Y = v, Ye = sg * xs, Yee = xss, Yeee = sg * xsss;
  const Yb = xb + c * xs, Yeb = sg * (xsb + c * xss), Yeeb = xssb + c * xsss;
  const C = c0 * Math.pow(beta, m);
  const mb = m / beta;
  const bt = beta / T; // ∂β/∂T
  const s = sign * C;
  q[0] += s * Y;
  q[1] += s * Ye;
  q[2] += s * Yee;
  q[3] += s * Yeee;
  q[4] += s * bt * (Yb + mb * Y);
  q[5] += s * bt * (Yeb + mb * Ye);
  q[6] += s * bt * (Yeeb + mb * Yee);
}

/** (d, T) derivatives of Q(η, T) given η_d, η_T, η_dT: returns [Q_d, Q_T, Q_dT] into r. */
function chainDT(q: Float64Array, etaD: number, etaT: number, etaDT: number, r: Float64Array, o: number): void {
  r[o] = q[0];
  r[o + 1] = q[1] * etaD;
  r[o + 2] = q[4] + q[1] * etaT;
  r[o + 3] = (q[2] * etaT + q[5]) * etaD + q[1] * etaDT;
}

const state: PairGasState = createPairGasState();

/**
 * Everything a table node needs at (d, T), into out[0..NODE_LENGTH). Returns PAIR_OK or the
 * pairGas status (then out is NaN). `etaGuess`: optional warm start for the neutrality solve.
 */
export function pairGasNode(d: number, T: number, out: Float64Array, etaGuess?: number): number {
  const st = pairGas(d, T, state, etaGuess);
  if (st !== PAIR_OK) {
    out.fill(NaN);
    return st;
  }
  const eta = state.eta;
  const kT = BOLTZMANN_K * T;
  const beta = kT / MEC2;
  species(eta, beta, spE);
  const etaP = -eta - 2 / beta;
  species(etaP, beta, spP);
  qN.fill(0);
  qS.fill(0);
  addSpecies(qN, spE, 0, true, false, 1, K, 1.5, beta, T);
  addSpecies(qN, spP, 0, true, true, -1, K, 1.5, beta, T);
  addSpecies(qS, spE, 7, true, false, 1, BOLTZMANN_K * K, 1.5, beta, T);
  addSpecies(qS, spP, 7, true, true, 1, BOLTZMANN_K * K, 1.5, beta, T);
  const [, Ne, Nee, Neee, , NeT, NeeT] = qN;
  const NT = qN[4];
  const etaD = AVOGADRO / Ne;
  const etaT = -NT / Ne;
  const etaDD = (-Nee * etaD * etaD) / Ne;
  const a = Nee * etaT + NeT;
  const etaDT = (-a * etaD) / Ne;
  const etaDDT = -((Neee * etaT + NeeT) * etaD * etaD + 2 * Nee * etaD * etaDT + etaDD * a) / Ne;
  // entropy per volume S and its (d, T) derivatives (S itself and S_d, S_T from pairGas)
  const S = state.entropy;
  const Sd = state.dSdD;
  const ST = state.dSdT;
  const [, Se, See, Seee, , SeT, SeeT] = qS;
  const Sdd = See * etaD * etaD + Se * etaDD;
  const SdT = (See * etaT + SeT) * etaD + Se * etaDT;
  const SddT = (Seee * etaT + SeeT) * etaD * etaD + 2 * See * etaD * etaDT + (See * etaT + SeT) * etaDD + Se * etaDDT;
  const d2 = d * d;
  const d3 = d2 * d;
  const P = state.pressure;
  out[NODE_F] = AVOGADRO * kT * eta - P / d;
  out[NODE_FD] = P / d2;
  out[NODE_FT] = -S / d;
  out[NODE_FDD] = (kT * AVOGADRO * etaD) / d - (2 * P) / d3;
  // f_T = −σ, σ = S/d
  out[NODE_FDT] = -(Sd / d - S / d2);
  out[NODE_FTT] = -ST / d;
  out[NODE_FDDT] = -(Sdd / d - (2 * Sd) / d2 + (2 * S) / d3);
  out[NODE_FDTT] = -(SdT / d - ST / d2);
  out[NODE_FDDTT] = -(SddT / d - (2 * SdT) / d2 + (2 * ST) / d3);
  out[NODE_ETA] = eta;
  out[NODE_ETA_D] = etaD;
  out[NODE_ETA_T] = etaT;
  out[NODE_ETA_DT] = etaDT;
  out[NODE_ETA_DD] = etaDD;
  out[NODE_ETA_DDT] = etaDDT;
  // positrons
  qX.fill(0);
  addSpecies(qX, spP, 0, true, true, 1, K, 1.5, beta, T);
  chainDT(qX, etaD, etaT, etaDT, out, NODE_NP);
  qX.fill(0);
  addSpecies(qX, spP, 14, false, true, 1, K * MEC2, 2.5, beta, T);
  chainDT(qX, etaD, etaT, etaDT, out, NODE_PP);
  qX.fill(0);
  addSpecies(qX, spP, 19, false, true, 1, K * MEC2, 2.5, beta, T);
  addSpecies(qX, spP, 0, true, true, 1, 2 * MEC2 * K, 1.5, beta, T); // rest mass of the pairs
  chainDT(qX, etaD, etaT, etaDT, out, NODE_UP);
  qX.fill(0);
  addSpecies(qX, spP, 7, true, true, 1, BOLTZMANN_K * K, 1.5, beta, T);
  chainDT(qX, etaD, etaT, etaDT, out, NODE_SP);
  const o = NODE_TOTALS;
  out[o] = P; out[o + 1] = state.dPdD; out[o + 2] = state.dPdT;
  out[o + 3] = state.energy; out[o + 4] = state.dUdD; out[o + 5] = state.dUdT;
  out[o + 6] = S; out[o + 7] = Sd; out[o + 8] = ST;
  return PAIR_OK;
}

/** The last pairGas state computed by pairGasNode (read-only use). */
export function lastPairGasState(): PairGasState {
  return state;
}
