/**
 * Fermi–Dirac integrals, complete and generalized (relativistic), with analytic derivatives.
 *
 *   complete:     F_j(η)    = ∫₀^∞ x^j / (e^{x−η} + 1) dx                         (NOT divided by Γ(j+1))
 *   generalized:  F_k(η, β) = ∫₀^∞ x^k (1 + βx/2)^{1/2} / (e^{x−η} + 1) dx
 *
 * Method (one code path for every corner of η ∈ (−∞, ∞), β ∈ [0, ∞)):
 *  - η ≥ 40: the range is split at x = η (McDougall & Stoner 1938, Phil. Trans. R. Soc. A 237, 67):
 *    ∫₀^η g dx in closed form plus the Sommerfeld expansion
 *    Σ_m 2(1 − 2^{1−2m}) ζ(2m) g^{(2m−1)}(η) (A. Sommerfeld 1928, Z. Phys. 47, 1; DLMF §25.12(iii)
 *    for the complete case). The derivatives g^{(n)}(η) of g = x^a (1+βx/2)^ν come from a three-term
 *    recurrence for Taylor coefficients that follows from the first-order differential equation g
 *    satisfies; the neglected remainder is O(e^{−η}), below double precision for η ≥ 40.
 *  - η < 40: piecewise Gauss–Legendre quadrature on a mesh graded towards the places where the
 *    integrand stops being analytic: the Fermi poles at x = η ± iπ(2n+1), the origin (x^k) and the
 *    branch point of (1+βx/2)^{1/2} at x = −2/β. The piece touching the origin is integrated in the
 *    half-rapidity u, x = (2/β) sinh²u (in which x^k (1+βx/2)^{1/2} dx is an entire function for
 *    half-integer k), or in t = √x when 2/β is far from it; pieces spanning a wide ratio of x use t,
 *    the others x; a 16-point Gauss–Laguerre rule takes the exponential tail. For η ≥ 1 the range is
 *    split at x = η (∫₀^η g dx exactly, the two Fermi corrections by quadrature) so that every
 *    piece's integrand decays away from x = η. Splitting at η with Gauss–Legendre pieces and a
 *    Gauss–Laguerre tail follows Aparicio (1998, ApJS 117, 627) and Gong, Zejda, Däppen & Aparicio
 *    (2001, Comput. Phys. Commun. 136, 294); the mesh, the variables and the node counts here are our
 *    own: each piece gets the number of nodes that its Bernstein-ellipse convergence rate (nearest
 *    singularity, or the growth of e^{−x} off the real axis) and its share of the whole call for,
 *    aiming at ~1e-16 of the whole per piece, times a safety factor tuned against mpmath.
 *  - ∫₀^X g dx (X = η) and its β-derivatives: closed form for z = βX/2 ≥ 0.5 (reduction formula for
 *    ∫ sinh^n u du with sinh²U = z, and the identities z Φ' = √(1+z) − (k+1)Φ for Φ = X^{−k−1}∫₀^X g),
 *    the binomial series in z below.
 *
 * Also, for the entropy of a Fermi gas, G_k = ∫ x^k (1+βx/2)^{1/2} σ(x−η) dx with the per-state
 * entropy σ = −f ln f − (1−f) ln(1−f), by the same quadrature or by the series
 * Σ_m 2m·2(1 − 2^{1−2m}) ζ(2m) g^{(2m−2)}(η), which follows from T S = U + P − μN.
 *
 * Accuracy, measured against mpmath at 32–40 digits (tests/eos/fermi-dirac.test.ts, fixtures from
 * tests/eos/fixtures/fermi-dirac/generate.py): complete F_j, j ∈ {−1/2, 1/2, 1, 3/2, 2, 5/2, 3},
 * η ∈ [−100, 1e6]: ≤ 3e-15 relative. Generalized F_k, k ∈ {1/2, 3/2, 5/2}, η ∈ [−100, 1e9],
 * β ∈ [1e-7, 2e3]: F ≤ 3e-15, ∂F/∂η ≤ 3e-15, ∂F/∂β ≤ 1.5e-14, ∂²F/∂η² ≤ 3e-14, ∂²F/∂η∂β ≤ 3e-15,
 * ∂²F/∂β² ≤ 3e-13 (the closed form of ∫₀^η ∂²g/∂β² dx near βη/2 = 0.5). With FD_FAST (what the pair
 * gas uses) about 1e-13. Orders supported: 2k ∈ {−1, 0, …, 6}. For η < −700 the values underflow
 * like e^η does (0 or subnormal).
 *
 * Cost (one core, see bench/fermi-dirac.ts): ~0.4 µs for a full set at η ≥ 40, 2–7 µs below
 * (40–150 integrand evaluations, each one exp and one or two square roots shared by all orders and
 * derivatives).
 */

// ---------------------------------------------------------------------------------------------
// Quadrature rules, computed once at module load.

/** Gauss–Legendre nodes and weights on [−1, 1] by Newton's method on the three-term recurrence. */
export function gaussLegendre(n: number): { x: Float64Array; w: Float64Array } {
  const x = new Float64Array(n);
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 1;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = z;
      for (let j = 2; j <= n; j++) {
        const p2 = ((2 * j - 1) * z * p1 - (j - 1) * p0) / j;
        p0 = p1;
        p1 = p2;
      }
      dp = (n * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) <= 1e-16 * Math.abs(z) + 1e-300) break;
    }
    let p0 = 1;
    let p1 = z;
    for (let j = 2; j <= n; j++) {
      const p2 = ((2 * j - 1) * z * p1 - (j - 1) * p0) / j;
      p0 = p1;
      p1 = p2;
    }
    dp = (n * (z * p1 - p0)) / (z * z - 1);
    x[i] = z;
    w[i] = 2 / ((1 - z * z) * dp * dp);
  }
  return { x, w };
}

/** Laguerre polynomial L_n and L_{n−1} at z (three-term recurrence). */
function laguerrePair(n: number, z: number): [number, number] {
  let p0 = 1;
  let p1 = 1 - z;
  for (let j = 2; j <= n; j++) {
    const p2 = ((2 * j - 1 - z) * p1 - (j - 1) * p0) / j;
    p0 = p1;
    p1 = p2;
  }
  return [p1, p0];
}

/**
 * Gauss–Laguerre nodes and weights (weight e^{−x} on [0, ∞)): roots bracketed on a fine grid,
 * bisected, then polished by Newton; w_i = 1/(x_i L_n'(x_i)²). The weights carry ~1e-15 relative
 * error, harmless here because the tail they integrate is ≤ 1e-5 of the whole.
 */
function gaussLaguerre(n: number): { x: Float64Array; w: Float64Array } {
  const x = new Float64Array(n);
  const w = new Float64Array(n);
  const steps = 40000;
  const top = 4 * n + 4;
  let count = 0;
  let zPrev = 0;
  let vPrev = 1;
  for (let i = 1; i <= steps && count < n; i++) {
    const z = top * (i / steps) ** 2;
    const v = laguerrePair(n, z)[0];
    if (v === 0 || v > 0 !== vPrev > 0) {
      let a = zPrev;
      let b = z;
      let fa = vPrev;
      for (let it = 0; it < 200; it++) {
        const m = 0.5 * (a + b);
        if (m === a || m === b) break;
        const fm = laguerrePair(n, m)[0];
        if (fm > 0 === fa > 0) {
          a = m;
          fa = fm;
        } else b = m;
      }
      let r = 0.5 * (a + b);
      for (let it = 0; it < 3; it++) {
        const [ln, lm] = laguerrePair(n, r);
        r -= ln / ((n * (ln - lm)) / r);
      }
      const [ln, lm] = laguerrePair(n, r);
      const d = (n * (ln - lm)) / r;
      x[count] = r;
      w[count] = 1 / (r * d * d);
      count++;
    }
    zPrev = z;
    vPrev = v;
  }
  return { x, w };
}

/** Gauss–Legendre rule sizes available to the mesh (a piece asks for the smallest size ≥ its need). */
const GL_SIZES = [2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22, 24, 26, 28, 30, 32];
const GL_MAX = 32;
/** Rule for n points stored in [ruleStart[n], ruleStart[n] + n) of the flat arrays, nodes on [0, 1]. */
const ruleStart = new Int32Array(GL_MAX + 1).fill(-1);
/** For each n, the index into GL_SIZES of the smallest available size ≥ n. */
const sizeFor = new Int32Array(GL_MAX + 1);
const RULE_X: Float64Array = (() => {
  let total = 0;
  for (const n of GL_SIZES) total += n;
  return new Float64Array(total);
})();
const RULE_W = new Float64Array(RULE_X.length);
{
  let off = 0;
  for (const n of GL_SIZES) {
    const { x, w } = gaussLegendre(n);
    ruleStart[n] = off;
    for (let i = 0; i < n; i++) {
      // map [−1, 1] → [0, 1]
      RULE_X[off + i] = 0.5 * (1 + x[i]);
      RULE_W[off + i] = 0.5 * w[i];
    }
    off += n;
  }
  let j = GL_SIZES.length - 1;
  for (let n = GL_MAX; n >= 0; n--) {
    while (j > 0 && GL_SIZES[j - 1] >= n) j--;
    sizeFor[n] = GL_SIZES[j];
  }
}

const LAG_N = 16;
const LAG = gaussLaguerre(LAG_N);
/** Laguerre weights times e^{x_i}, so that ∫ h(x) dx ≈ Σ LAG_WE_i h(x_i) for h decaying like e^{−x}. */
const LAG_WE = LAG.w.map((w, i) => w * Math.exp(LAG.x[i]));

// ---------------------------------------------------------------------------------------------
// Sommerfeld coefficients.

/** SOMM_W[m] = 2(1 − 2^{1−2m}) ζ(2m) = 2 η_D(2m) (Dirichlet eta), m ≥ 1. */
const SOMM_M_MAX = 24;
const SOMM_W = new Float64Array(SOMM_M_MAX + 2);
{
  SOMM_W[1] = (Math.PI * Math.PI) / 6;
  for (let m = 2; m <= SOMM_M_MAX + 1; m++) {
    // alternating series, summed from the small end; the first omitted term is < 1e-17
    const nMax = Math.ceil(Math.pow(1e17, 1 / (2 * m))) + 2;
    let s = 0;
    for (let n = nMax; n >= 1; n--) s += (n % 2 === 1 ? 1 : -1) * Math.pow(n, -2 * m);
    SOMM_W[m] = 2 * s;
  }
}
/** n! for n ≤ 60. */
const FACT = new Float64Array(61);
FACT[0] = 1;
for (let n = 1; n <= 60; n++) FACT[n] = FACT[n - 1] * n;

/** Below this η the quadrature path is used, above it the Sommerfeld path. */
export const SOMMERFELD_ETA = 40;
/** From this η upwards the quadrature splits the range at x = η. */
const SPLIT_ETA = 1;

// ---------------------------------------------------------------------------------------------
// Layout of the derivative sets.

/** Index of each quantity within one order's block of 6 in a generalized set. */
export const FD_F = 0;
export const FD_DETA = 1;
export const FD_DBETA = 2;
export const FD_DETA2 = 3;
export const FD_DETADBETA = 4;
export const FD_DBETA2 = 5;
/**
 * Entropy integrals (for k = k0 and k0 + 1, at out[FD_ENTROPY_OFFSET + 5i + q]): G_k = ∫ g_k σ dx and
 * its derivatives ∂/∂η = ∫ g_k (x−η) f(1−f) dx, ∂/∂β, ∂²/∂η², ∂²/∂η∂β, with
 * σ = −f ln f − (1−f) ln(1−f), g_k = x^k (1+βx/2)^{1/2}. They give the entropy of a Fermi gas without
 * the cancellation of (U + P − μn)/T in degenerate matter.
 */
export const FD_ENTROPY_OFFSET = 18;
export const FD_G = 0;
export const FD_G_DETA = 1;
export const FD_G_DBETA = 2;
export const FD_G_DETA2 = 3;
export const FD_G_DETADBETA = 4;
/** Length of the output of {@link generalizedFermiDiracSet}: 3 orders × 6 quantities + 2 × 5 entropy integrals. */
export const FD_SET_LENGTH = 28;
/** Flags of {@link generalizedFermiDiracSet}. */
export const FD_SECOND = 1;
export const FD_ENTROPY = 2;
export const FD_LIGHT = 4;
/** Aim at ~1e-13 instead of ~1e-15 relative (fewer nodes); what the pair gas needs for its 1e-10. */
export const FD_FAST = 8;

// ---------------------------------------------------------------------------------------------
// Mesh: pieces of the integration range, rebuilt per call into preallocated arrays.

const KIND_SQRT = 0; // Gauss–Legendre in t = √x on [√lo, √hi]
const KIND_LINEAR = 3; // Gauss–Legendre in x on [lo, hi]
const KIND_ORIGIN = 1; // Gauss–Legendre in u (x = (2/β) sinh²u) or t (x = t²) on [0, hi]
const KIND_TAIL = 2; // Gauss–Laguerre on [lo, ∞)

const MODE_DIRECT = 0; // integrand g·f
const MODE_UPPER = 1; // x ≥ η, split: g·f
const MODE_LOWER = 2; // x ≤ η, split: −g·(1 − f)  (the ∫₀^η g dx part is added exactly)
const MODE_NONE = 3; // integrand g (Fermi factor 1): ∫₀^X g dx by quadrature

const MAX_PIECES = 40;
const pieceKind = new Int32Array(MAX_PIECES);
const pieceMode = new Int32Array(MAX_PIECES);
const pieceN = new Int32Array(MAX_PIECES);
const pieceLo = new Float64Array(MAX_PIECES);
const pieceHi = new Float64Array(MAX_PIECES);
let pieceCount = 0;

/**
 * Safety factor on every piece's node count over the convergence-rate estimate; 1.2 keeps every
 * quantity within ~1e-13 of mpmath over the whole tested range (1.0 leaves a few cases at ~5e-13).
 */
const nodeSafety = 1.2;

/** Offsets from η of the breakpoints graded away from the Fermi edge. */
const EDGE_GRADE = [2, 6, 13, 22, 38];
/** Fixed breakpoints away from the origin (the origin-side grading). */
const ORIGIN_GRADE = [4, 9];
/** Split form: the Gauss–Laguerre tail starts at η + TAIL_SPLIT. */
const TAIL_SPLIT = 13;
/** Direct form: the Gauss–Laguerre tail starts at max(η, 0) + TAIL_DIRECT. */
const TAIL_DIRECT = 25;
/** The origin piece [0, a] uses the rapidity variable when 2/β < U_SWITCH·a. */
const U_SWITCH = 16;
/** With β large the rapidity piece covers [0, min(U_PIECE_END, first breakpoint)]. */
const U_PIECE_END = 1;

// complex helpers (results in cRe, cIm)
let cRe = 0;
let cIm = 0;
function csqrt(re: number, im: number): void {
  const mod = Math.sqrt(re * re + im * im);
  const r = Math.sqrt(0.5 * (mod + re));
  let i = Math.sqrt(Math.max(0, 0.5 * (mod - re)));
  if (im < 0) i = -i;
  cRe = r;
  cIm = i;
}

/**
 * Bernstein-ellipse parameter ρ of the interval [lo, hi] for a singularity at (pr, pi):
 * ρ = |w + √(w²−1)| with w the point mapped to [−1, 1] (branch with ρ ≥ 1).
 */
function bernsteinRho(lo: number, hi: number, pr: number, pi: number): number {
  const h = 0.5 * (hi - lo);
  const wr = (pr - 0.5 * (hi + lo)) / h;
  if (pi === 0) {
    // real singularity outside the interval: ρ = |w| + √(w² − 1)
    const a = Math.abs(wr);
    return a + Math.sqrt(Math.max(0, a * a - 1));
  }
  const wi = pi / h;
  csqrt(wr * wr - wi * wi - 1, 2 * wr * wi);
  let sr = cRe;
  let si = cIm;
  if (sr * wr + si * wi < 0) {
    sr = -sr;
    si = -si;
  }
  const ar = wr + sr;
  const ai = wi + si;
  return Math.sqrt(ar * ar + ai * ai);
}

/**
 * Node count for a piece: enough that ρ^{−2n} times the piece's weight relative to the whole
 * (exp(logWeight)) stays below ~1e-16.
 */
function nodesFor(rho: number, logWeight: number): number {
  const need = currentTarget + logWeight;
  if (need <= 0) return 0;
  let n = Math.ceil((nodeSafety * need) / (2 * Math.log(rho)));
  if (n < 2) n = 2;
  if (n > GL_MAX) n = GL_MAX;
  return sizeFor[n];
}
/** −ln of the relative error each piece is allowed. */
const TARGET_LOG = 36.8;
/** −ln of the relative error aimed at with FD_FAST. */
const FAST_TARGET_LOG = 30;
/** −ln of the relative error allowed in the light passes of a Newton iteration. */
const LIGHT_TARGET_LOG = 25;
let currentTarget = TARGET_LOG;

function pushPiece(kind: number, mode: number, lo: number, hi: number, n: number): void {
  if (n <= 0 || pieceCount >= MAX_PIECES) return;
  pieceKind[pieceCount] = kind;
  pieceMode[pieceCount] = mode;
  pieceLo[pieceCount] = lo;
  pieceHi[pieceCount] = hi;
  pieceN[pieceCount] = n;
  pieceCount++;
}

// breakpoints of the current mesh
const bp = new Float64Array(32);
let nbp = 0;
function addBreak(x: number): void {
  if (x > bp[nbp - 1] + 1e-3 * Math.max(1, x)) bp[nbp++] = x;
}
/** Adds x = η, where the integrand changes form: it replaces a breakpoint too close below it. */
function addEdgeBreak(x: number): void {
  if (nbp > 1 && x <= bp[nbp - 1] + 1e-3 * Math.max(1, x)) bp[nbp - 1] = x;
  else if (x > bp[nbp - 1]) bp[nbp++] = x;
}

/**
 * Builds the mesh for η < SOMMERFELD_ETA; returns whether the split form (∫₀^η g dx added exactly)
 * is used. k0: lowest order of the triple; the integrands carry powers x^{k0} … x^{k0+4}.
 */
function buildMesh(eta: number, beta: number, k0: number): boolean {
  pieceCount = 0;
  const split = eta >= SPLIT_ETA;
  const eps = beta > 0 ? 2 / beta : Infinity;
  const minPow = k0;
  const maxPow = k0 + 4;
  // singularity strength exponent of (1+x/ε)^{±1/2} seen from x ≫ ε (see the header)
  const ampPow = k0 + 1.5;
  nbp = 0;
  let tailStart: number;
  if (split) {
    const lowerStart = Math.max(0, eta - 38);
    bp[nbp++] = lowerStart;
    let j = 0;
    for (let i = EDGE_GRADE.length - 1; i >= 0; i--) {
      const e = eta - EDGE_GRADE[i];
      while (j < ORIGIN_GRADE.length && ORIGIN_GRADE[j] < e) addBreak(ORIGIN_GRADE[j++]);
      addBreak(e);
    }
    while (j < ORIGIN_GRADE.length && ORIGIN_GRADE[j] < eta) addBreak(ORIGIN_GRADE[j++]);
    addEdgeBreak(eta);
    addBreak(eta + 2);
    addBreak(eta + 6);
    tailStart = eta + TAIL_SPLIT;
    addBreak(tailStart);
  } else {
    bp[nbp++] = 0;
    tailStart = Math.max(eta, 0) + TAIL_DIRECT;
    for (let i = 0; i < 3; i++) {
      const e = eta + EDGE_GRADE[i];
      if (e > 0 && e < tailStart) addBreak(e);
    }
    addBreak(tailStart);
  }
  // the piece at the origin: rapidity variable when the branch point −ε is close
  let first = 0;
  if (bp[0] === 0) {
    let a = bp[1];
    if (eps < U_SWITCH * a) {
      if (a > U_PIECE_END) {
        // insert a breakpoint at U_PIECE_END
        for (let i = nbp; i > 1; i--) bp[i] = bp[i - 1];
        bp[1] = U_PIECE_END;
        nbp++;
        a = U_PIECE_END;
      }
    }
    pushPiece(KIND_ORIGIN, split ? (a <= eta ? MODE_LOWER : MODE_UPPER) : MODE_DIRECT, 0, a, originNodes(eta, eps, a, k0));
    first = 1;
  }
  const edge = Math.max(eta, 0);
  const scale = Math.max(eta, 1);
  // in the direct form the Fermi pole's residue is ~e^{−η} times the integrand's scale e^{η}
  const poleAmp = split ? 0 : Math.max(0, -eta);
  // Fermi pole in the t = √x plane
  csqrt(eta, Math.PI);
  const tpRe = cRe;
  const tpIm = cIm;
  const tBranch = Math.sqrt(eps);
  for (let i = first; i + 1 < nbp; i++) {
    const a = bp[i];
    const b = bp[i + 1];
    let d = 0;
    if (edge < a) d = a - edge;
    else if (edge > b) d = edge - b;
    const p = b > edge ? maxPow : minPow;
    // the smallest of the wholes is the second η-derivative, ~ η^{p−1}
    const logTotal = split ? (p - 1) * Math.log(scale) : 0;
    const logW = Math.log(b - a) - d + p * Math.log(Math.max(b, 1)) - logTotal;
    const logW0 = Math.log(b - a) - d + minPow * Math.log(Math.max(b, 1)) - (split ? (minPow - 1) * Math.log(scale) : 0);
    // strength of the branch point at x = −ε relative to the piece: (ε/a)^{k0+3/2} when it is
    // close to the origin compared with the piece, (ε/b)^{k0+4} when it is far out
    let logAmp = 0;
    if (eps < a) logAmp = ampPow * Math.log(eps / a);
    else if (eps > b) logAmp = maxPow * Math.log(eps / Math.max(b, 1));
    let n: number;
    let kind: number;
    if (a < 0.25 * b) {
      // wide ratio: t = √x removes the x^{1/2} behaviour at the origin
      kind = KIND_SQRT;
      const ta = Math.sqrt(a);
      const tb = Math.sqrt(b);
      const h = 0.5 * (tb - ta);
      const rhoE = bernsteinRho(ta, tb, tpRe, tpIm);
      const rhoB = tBranch < Infinity ? bernsteinRho(ta, tb, 0, tBranch) : Infinity;
      // e^{−t²} = e^{−(m + h s)²}: treated as e^{r s} with r = 2mh + h²
      n = Math.max(
        nodesFor(rhoE, logW + poleAmp),
        tBranch < Infinity ? nodesFor(rhoB, logW + logAmp) : 0,
        growthNodes(h * (ta + tb) + h * h, logW),
      );
    } else {
      kind = KIND_LINEAR;
      const rhoE = bernsteinRho(a, b, eta, Math.PI);
      const rhoO = bernsteinRho(a, b, 0, 0);
      const rhoB = eps < Infinity ? bernsteinRho(a, b, -eps, 0) : Infinity;
      n = Math.max(
        nodesFor(rhoE, logW + poleAmp),
        nodesFor(rhoO, logW0),
        rhoB < Infinity ? nodesFor(rhoB, logW + logAmp) : 0,
        growthNodes(0.5 * (b - a), logW),
      );
    }
    const mode = split ? (b <= eta ? MODE_LOWER : MODE_UPPER) : MODE_DIRECT;
    pushPiece(kind, mode, a, b, Math.max(n, 2));
  }
  pushPiece(KIND_TAIL, split ? MODE_UPPER : MODE_DIRECT, tailStart, 0, LAG_N);
  return split;
}

/** Node count of the origin piece [0, a]. */
function originNodes(eta: number, eps: number, a: number, k0: number): number {
  if (eps < U_SWITCH * a) {
    // u = asinh(√(x/ε)): the Fermi pole sits at asinh(√((η+iπ)/ε))
    csqrt(eta / eps, Math.PI / eps);
    const wr = cRe;
    const wi = cIm;
    csqrt(wr * wr - wi * wi + 1, 2 * wr * wi); // asinh(w) = ln(w + √(w²+1))
    const zr = wr + cRe;
    const zi = wi + cIm;
    const pr = 0.5 * Math.log(zr * zr + zi * zi);
    const pi = Math.abs(Math.atan2(zi, zr));
    const U = Math.asinh(Math.sqrt(a / eps));
    // e^{−x} with x = ε sinh²u grows like e^{ε v²} at Im u = v: cap the ellipse at ε v² = 2.25
    const y = 1.5 / Math.sqrt(eps) / (0.5 * U);
    const rho = Math.min(bernsteinRho(0, U, pr, pi), y + Math.sqrt(y * y + 1));
    const nPole = nodesFor(rho, 2.25);
    // the integrands grow like e^{(2k0+7)u}: Gauss–Legendre error for e^{r s} on [−1, 1] is
    // 2^{2n+1} (n!)⁴ r^{2n} / ((2n+1) ((2n)!)³) e^{|r|}, relative to the integral ~ e^{|r|}/r
    const nGrowth = growthNodes(0.5 * (2 * k0 + 7) * U, 0);
    let n = Math.max(nPole, nGrowth);
    if (n > GL_MAX) n = GL_MAX;
    return sizeFor[n];
  }
  // t = √x
  csqrt(eta, Math.PI);
  const len = Math.sqrt(a);
  const poleAmp = eta < SPLIT_ETA ? Math.max(0, -eta) : 0;
  // e^{−t²} on [0, T]: treated as e^{r s} with r = 2mh + h² = 3T²/4
  let n = Math.max(nodesFor(bernsteinRho(0, len, cRe, Math.abs(cIm)), poleAmp), growthNodes(0.75 * a, 0));
  if (eps < Infinity) {
    // branch point of (1 + t²/ε)^{±1/2} at t = i√ε, seen with amplitude ~ (ε/a)^{k0+4}
    const rhoB = bernsteinRho(0, len, 0, Math.sqrt(eps));
    n = Math.max(n, nodesFor(rhoB, (k0 + 4) * Math.log(Math.max(1, eps / Math.max(a, 1)))));
  }
  if (n > GL_MAX) n = GL_MAX;
  return sizeFor[n];
}

/**
 * Nodes for an entire factor growing like e^{r s} across the piece (s ∈ [−1, 1]): the Gauss–Legendre
 * error 2^{2n+1} (n!)⁴ r^{2n}/((2n+1)((2n)!)³), relative to the piece's e^{|r|}/r, times the piece's
 * weight, below e^{−target}.
 */
function growthNodes(r: number, logWeight: number): number {
  if (!(r > 0)) return 2;
  const lnR = Math.log(r);
  const lnR1 = Math.max(lnR, 0);
  const limit = -(currentTarget + logWeight) / nodeSafety;
  let n = 2;
  for (; n < GL_MAX; n++) {
    if (GL_ERROR_LN[n] + 2 * n * lnR + lnR1 < limit) break;
  }
  return sizeFor[n];
}

/** ln of the Gauss–Legendre error constant 2^{2n+1} (n!)⁴ / ((2n+1) ((2n)!)³) for n ≤ GL_MAX. */
const GL_ERROR_LN = new Float64Array(GL_MAX + 1);
for (let n = 1; n <= GL_MAX; n++) {
  GL_ERROR_LN[n] = (2 * n + 1) * Math.LN2 + 4 * Math.log(FACT[n]) - Math.log(2 * n + 1) - 3 * Math.log(FACT[2 * n]);
}


// ---------------------------------------------------------------------------------------------
// Quadrature core for the triple k0, k0+1, k0+2 with k0 ∈ {−1/2, 0, 1/2, 1}.

// Node data of the current mesh (filled by fillNodes, ≤ MAX_NODES): x, x^{1/2}, (1+βx/2)^{1/2},
// weight (including the Jacobian of the piece's variable) and the piece's mode.
const MAX_NODES = MAX_PIECES * GL_MAX;
const NODE_X = new Float64Array(MAX_NODES);
const NODE_SX = new Float64Array(MAX_NODES);
const NODE_S = new Float64Array(MAX_NODES);
const NODE_W = new Float64Array(MAX_NODES);
const NODE_MODE = new Int32Array(MAX_NODES);

/** Evaluates the variable changes of every piece; returns the number of nodes. */
function fillNodes(beta: number): number {
  const halfBeta = 0.5 * beta;
  let m = 0;
  for (let p = 0; p < pieceCount; p++) {
    const kind = pieceKind[p];
    const mode = pieceMode[p];
    const n = pieceN[p];
    const lo = pieceLo[p];
    const hi = pieceHi[p];
    const off = ruleStart[n];
    if (kind === KIND_LINEAR) {
      const len = hi - lo;
      for (let i = 0; i < n; i++, m++) {
        const x = lo + len * RULE_X[off + i];
        NODE_X[m] = x;
        NODE_SX[m] = Math.sqrt(x);
        NODE_S[m] = Math.sqrt(1 + halfBeta * x);
        NODE_W[m] = len * RULE_W[off + i];
        NODE_MODE[m] = mode;
      }
    } else if (kind === KIND_SQRT) {
      const tLo = Math.sqrt(lo);
      const tLen = Math.sqrt(hi) - tLo;
      for (let i = 0; i < n; i++, m++) {
        const t = tLo + tLen * RULE_X[off + i];
        const x = t * t;
        NODE_X[m] = x;
        NODE_SX[m] = t;
        NODE_S[m] = Math.sqrt(1 + halfBeta * x);
        NODE_W[m] = 2 * t * tLen * RULE_W[off + i];
        NODE_MODE[m] = mode;
      }
    } else if (kind === KIND_TAIL) {
      for (let i = 0; i < LAG_N; i++, m++) {
        const x = lo + LAG.x[i];
        NODE_X[m] = x;
        NODE_SX[m] = Math.sqrt(x);
        NODE_S[m] = Math.sqrt(1 + halfBeta * x);
        NODE_W[m] = LAG_WE[i];
        NODE_MODE[m] = mode;
      }
    } else if (beta * hi > 2 / U_SWITCH) {
      // rapidity: x = ε sinh²u, dx = 2ε sinh u cosh u du, (1+βx/2)^{1/2} = cosh u
      const eps = 2 / beta;
      const sqrtEps = Math.sqrt(eps);
      const U = Math.asinh(Math.sqrt(hi / eps));
      for (let i = 0; i < n; i++, m++) {
        const u = U * RULE_X[off + i];
        const em = Math.expm1(u);
        const e = em + 1;
        const sh = (em * (em + 2)) / (2 * e);
        const ch = 0.5 * (e + 1 / e);
        const sx = sqrtEps * sh;
        NODE_X[m] = sx * sx;
        NODE_SX[m] = sx;
        NODE_S[m] = ch;
        NODE_W[m] = U * RULE_W[off + i] * 2 * eps * sh * ch;
        NODE_MODE[m] = mode;
      }
    } else {
      const T = Math.sqrt(hi);
      for (let i = 0; i < n; i++, m++) {
        const t = T * RULE_X[off + i];
        const x = t * t;
        NODE_X[m] = x;
        NODE_SX[m] = t;
        NODE_S[m] = Math.sqrt(1 + halfBeta * x);
        NODE_W[m] = T * RULE_W[off + i] * 2 * t;
        NODE_MODE[m] = mode;
      }
    }
  }
  return m;
}

/** x^{k0} at node m for 2k0 ∈ {−1, 0, 1, 2}. */
function powK0(twoK0: number, m: number): number {
  return twoK0 === 1 ? NODE_SX[m] : twoK0 === -1 ? 1 / NODE_SX[m] : twoK0 === 0 ? 1 : NODE_X[m];
}

/**
 * Accumulates the integrals over the current mesh into acc (added, not overwritten). twoK0 = 2·k0.
 * flags: FD_SECOND (second derivatives), FD_ENTROPY (the σ integrals), FD_LIGHT (only F and ∂F/∂η
 * of the first two orders, for Newton iterations).
 */
function integrateMesh(twoK0: number, eta: number, beta: number, acc: Float64Array, flags: number): void {
  const count = fillNodes(beta);
  if ((flags & FD_LIGHT) !== 0) {
    let f0 = 0, f0e = 0, f1 = 0, f1e = 0;
    for (let m = 0; m < count; m++) {
      const x = NODE_X[m];
      const mode = NODE_MODE[m];
      let f: number, omf: number;
      if (x >= eta) {
        const E = Math.exp(eta - x);
        omf = 1 / (1 + E);
        f = E * omf;
      } else {
        const E = Math.exp(x - eta);
        f = 1 / (1 + E);
        omf = E * f;
      }
      const wF = mode === MODE_LOWER ? -omf : f;
      const wE = f * omf;
      let q = NODE_W[m] * NODE_S[m] * powK0(twoK0, m);
      f0 += q * wF;
      f0e += q * wE;
      q *= x;
      f1 += q * wF;
      f1e += q * wE;
    }
    acc[0] += f0; acc[1] += f0e; acc[6] += f1; acc[7] += f1e;
    return;
  }
  const second = (flags & FD_SECOND) !== 0;
  const entropy = (flags & FD_ENTROPY) !== 0;
  let f0 = 0, f0e = 0, f0b = 0, f0ee = 0, f0eb = 0, f0bb = 0;
  let f1 = 0, f1e = 0, f1b = 0, f1ee = 0, f1eb = 0, f1bb = 0;
  let f2 = 0, f2e = 0, f2b = 0, f2ee = 0, f2eb = 0, f2bb = 0;
  let s0 = 0, s0e = 0, s0b = 0, s0ee = 0, s0eb = 0, s1 = 0, s1e = 0, s1b = 0, s1ee = 0, s1eb = 0;
  for (let m = 0; m < count; m++) {
    const x = NODE_X[m];
    const s = NODE_S[m];
    const mode = NODE_MODE[m];
    // Fermi weights: f, f(1−f), f(1−f)(1−2f); E = e^{−|x−η|}
    let wF: number, wE: number, wEE: number;
    let E = 0;
    if (mode === MODE_NONE) {
      wF = 1;
      wE = 0;
      wEE = 0;
    } else {
      let f: number, omf: number;
      if (x >= eta) {
        E = Math.exp(eta - x);
        omf = 1 / (1 + E);
        f = E * omf;
      } else {
        E = Math.exp(x - eta);
        f = 1 / (1 + E);
        omf = E * f;
      }
      wF = mode === MODE_LOWER ? -omf : f;
      wE = f * omf;
      wEE = wE * (omf - f);
    }
    let q = NODE_W[m] * s * powK0(twoK0, m);
    const xs = (0.25 * x) / (s * s);
    let pb = q * xs;
    let rb = -pb * xs;
    if (entropy && mode !== MODE_NONE) {
      // σ = −f ln f − (1−f) ln(1−f) = ln(1 + E) + |x−η| E/(1+E); dσ/dη = (x−η) f(1−f)
      const y = x - eta;
      const sig = Math.log1p(E) + Math.abs(y) * (E / (1 + E));
      const ye = y * wE;
      const yee = y * wEE - wE; // ∂/∂η of (x−η) f(1−f)
      s0 += q * sig;
      s0e += q * ye;
      s0b += pb * sig;
      s0ee += q * yee;
      s0eb += pb * ye;
      s1 += q * x * sig;
      s1e += q * x * ye;
      s1b += pb * x * sig;
      s1ee += q * x * yee;
      s1eb += pb * x * ye;
    }
    f0 += q * wF;
    f0e += q * wE;
    f0b += pb * wF;
    q *= x;
    pb *= x;
    f1 += q * wF;
    f1e += q * wE;
    f1b += pb * wF;
    const q2 = q * x;
    const pb2 = pb * x;
    f2 += q2 * wF;
    f2e += q2 * wE;
    f2b += pb2 * wF;
    if (second) {
      const q0 = q / x;
      const pb0 = pb / x;
      f0ee += q0 * wEE;
      f0eb += pb0 * wE;
      f0bb += rb * wF;
      rb *= x;
      f1ee += q * wEE;
      f1eb += pb * wE;
      f1bb += rb * wF;
      rb *= x;
      f2ee += q2 * wEE;
      f2eb += pb2 * wE;
      f2bb += rb * wF;
    }
  }
  acc[0] += f0; acc[1] += f0e; acc[2] += f0b; acc[3] += f0ee; acc[4] += f0eb; acc[5] += f0bb;
  acc[6] += f1; acc[7] += f1e; acc[8] += f1b; acc[9] += f1ee; acc[10] += f1eb; acc[11] += f1bb;
  acc[12] += f2; acc[13] += f2e; acc[14] += f2b; acc[15] += f2ee; acc[16] += f2eb; acc[17] += f2bb;
  if (entropy) {
    acc[18] += s0; acc[19] += s0e; acc[20] += s0b; acc[21] += s0ee; acc[22] += s0eb;
    acc[23] += s1; acc[24] += s1e; acc[25] += s1b; acc[26] += s1ee; acc[27] += s1eb;
  }
}

// ---------------------------------------------------------------------------------------------
// ∫₀^X x^k (1+βx/2)^{1/2} dx and its first two β-derivatives, exactly.

/**
 * Below this z = βX/2 the integral ∫₀^X g dx (and its β-derivatives) is the binomial series in z
 * (≤ 60 terms); above it the closed form, which loses up to ~5e-13 in the second β-derivative near
 * z = 0.5 and nothing measurable in the integral itself.
 */
const Z_CLOSED = 0.5;

/**
 * Adds to acc[6i + FD_F], acc[6i + FD_DBETA], acc[6i + FD_DBETA2] (i = 0, 1, 2; k = k0 + i) the
 * integrals ∫₀^X x^k s dx, ∫₀^X x^{k+1}/(4s) dx, −∫₀^X x^{k+2}/(16 s³) dx with s = (1+βx/2)^{1/2}.
 */
function addOriginExact(twoK0: number, X: number, beta: number, acc: Float64Array): void {
  if (X <= 0) return;
  const z = 0.5 * beta * X;
  // X^{k0+1} without Math.pow (2k0 ∈ {−1, 0, 1, 2})
  let Xk1 = twoK0 === 1 ? X * Math.sqrt(X) : twoK0 === -1 ? Math.sqrt(X) : twoK0 === 2 ? X * X : X;
  const closed = z >= Z_CLOSED;
  const S = closed ? Math.sqrt(z) : 0;
  const C = closed ? Math.sqrt(1 + z) : 0;
  const logSC = closed ? Math.log(S + C) : 0;
  const twoOverBeta = 2 / beta;
  // (2/β)^{k0+1}
  let epsK1 = closed ? (twoK0 === 1 ? twoOverBeta * Math.sqrt(twoOverBeta) : twoK0 === -1 ? Math.sqrt(twoOverBeta) : twoK0 === 2 ? twoOverBeta * twoOverBeta : twoOverBeta) : 0;
  for (let i = 0; i < 3; i++, Xk1 *= X, epsK1 *= twoOverBeta) {
    const k = 0.5 * twoK0 + i;
    const base = 6 * i;
    if (z < Z_CLOSED) {
      // Φ(z) = Σ_j binom(1/2, j) z^j/(k+j+1), Φ' and Φ'' likewise, summed until j² z^j < 1e-18
      let phi = 0;
      let dphi = 0;
      let ddphi = 0;
      let c = 1; // binom(1/2, j)
      let zj = 1; // z^j
      let zj1 = 0; // z^{j−1}
      let zj2 = 0; // z^{j−2}
      for (let j = 0; j < 100; j++) {
        const w = c / (k + j + 1);
        phi += w * zj;
        dphi += j * w * zj1;
        ddphi += j * (j - 1) * w * zj2;
        if (j > 2 && j * j * zj < 1e-18) break;
        c *= (0.5 - j) / (j + 1);
        zj2 = zj1;
        zj1 = j === 0 ? 1 : zj1 * z;
        zj *= z;
      }
      acc[base + FD_F] += Xk1 * phi;
      acc[base + FD_DBETA] += Xk1 * X * 0.5 * dphi;
      acc[base + FD_DBETA2] += Xk1 * X * X * 0.25 * ddphi;
    } else {
      // Φ_k(z) = 2 z^{−k−1} (I_n + I_{n+2}), I_m = ∫₀^U sinh^m u du, n = 2k+1, sinh U = √z
      const n = twoK0 + 2 * i + 1;
      const P = integralSinhPowers(n, S, C, logSC);
      const p1 = 2 * epsK1 * P;
      const p1b = (Xk1 * C - (k + 1) * p1) / beta;
      const p1bb = ((Xk1 * X) / (4 * C) - (k + 2) * p1b) / beta;
      acc[base + FD_F] += p1;
      acc[base + FD_DBETA] += p1b;
      acc[base + FD_DBETA2] += p1bb;
    }
  }
}

/** ∫₀^U sinh^n u cosh²u du = I_n + I_{n+2} for sinh U = S, cosh U = C (n ≥ 0), by the reduction formula. */
function integralSinhPowers(n: number, S: number, C: number, logSC: number): number {
  // I_m = [S^{m−1} C − (m−1) I_{m−2}]/m, I_0 = U, I_1 = C − 1
  let I: number;
  let m: number;
  let Sp: number; // S^{m+1}
  if (n % 2 === 0) {
    I = logSC; // U = asinh S
    m = 0;
    Sp = S;
  } else {
    I = (S * S) / (C + 1); // C − 1 without cancellation
    m = 1;
    Sp = S * S;
  }
  let In = m === n ? I : 0;
  while (m < n + 2) {
    const next = (Sp * C - (m + 1) * I) / (m + 2);
    Sp *= S * S;
    I = next;
    m += 2;
    if (m === n) In = I;
  }
  return In + I;
}

// ---------------------------------------------------------------------------------------------
// Sommerfeld expansion.

const somA = new Float64Array(64);
/** 1/n for n ≤ 63. */
const RECIP = new Float64Array(64).map((_, n) => (n > 0 ? 1 / n : 0));
const somB = new Float64Array(64);
const somC = new Float64Array(64);

/**
 * Taylor coefficients a_0..a_nMax at x = η of h(x) = x^a (1 + Bx)^ν into out, from
 * (η+ξ)(A+Bξ) h' = [a(A+Bξ) + νB(η+ξ)] h, A = 1 + Bη.
 */
function taylorCoefficients(a: number, nu: number, eta: number, B: number, nMax: number, out: Float64Array, h0: number): void {
  const A = 1 + B * eta;
  out[0] = h0;
  const c0 = a * A + nu * B * eta;
  const c1 = eta * B + A;
  const inv = 1 / (eta * A);
  let prev = 0;
  let cur = out[0];
  for (let n = 0; n < nMax; n++) {
    const next = ((c0 - c1 * n) * cur + B * (a + nu - n + 1) * prev) * inv * RECIP[n + 1];
    out[n + 1] = next;
    prev = cur;
    cur = next;
  }
}

/** Number of Sommerfeld terms for η: enough for the second η-derivative to 1e-17 relative. */
function sommerfeldTerms(eta: number): number {
  let m = 1;
  while (m < SOMM_M_MAX && eta < SOMM_ETA_MIN[m]) m++;
  return m;
}
/**
 * SOMM_ETA_MIN[m]: the smallest η at which the m-th term of the slowest series (the second
 * η-derivative), ~ (2m+1)! η^{−2m} (2m+1)^{−3/2}, is below e^{−41} relative.
 */
const SOMM_ETA_MIN = new Float64Array(SOMM_M_MAX + 1);
for (let m = 1; m <= SOMM_M_MAX; m++) {
  SOMM_ETA_MIN[m] = Math.exp((Math.log(FACT[2 * m + 1]) - 1.5 * Math.log(2 * m + 1) + 41) / (2 * m));
}

function addSommerfeld(twoK0: number, eta: number, beta: number, acc: Float64Array, entropy: boolean): void {
  const B = 0.5 * beta;
  const M = sommerfeldTerms(eta);
  const nMax = 2 * M + 1;
  const A = 1 + B * eta;
  const sqrtA = Math.sqrt(A);
  // η^{k0} without Math.pow (2k0 ∈ {−1, 0, 1, 2})
  let etaK = twoK0 === 1 ? Math.sqrt(eta) : twoK0 === -1 ? 1 / Math.sqrt(eta) : twoK0 === 2 ? eta : 1;
  for (let i = 0; i < 3; i++) {
    const k = 0.5 * twoK0 + i;
    const base = 6 * i;
    // h(η) for x^k A^{1/2}, x^{k+1} A^{−1/2}, x^{k+2} A^{−3/2}
    taylorCoefficients(k, 0.5, eta, B, nMax, somA, etaK * sqrtA);
    taylorCoefficients(k + 1, -0.5, eta, B, nMax, somB, (etaK * eta) / sqrtA);
    taylorCoefficients(k + 2, -1.5, eta, B, nMax, somC, (etaK * eta * eta) / (A * sqrtA));
    etaK *= eta;
    let sF = 0, sE = 0, sEE = 0, sB = 0, sEB = 0, sBB = 0;
    for (let m = M; m >= 1; m--) {
      const W = SOMM_W[m];
      const fo = W * FACT[2 * m - 1];
      const fe = W * FACT[2 * m];
      const fo2 = W * FACT[2 * m + 1];
      sF += fo * somA[2 * m - 1];
      sE += fe * somA[2 * m];
      sEE += fo2 * somA[2 * m + 1];
      sB += fo * somB[2 * m - 1];
      sEB += fe * somB[2 * m];
      sBB += fo * somC[2 * m - 1];
    }
    acc[base + FD_F] += sF;
    acc[base + FD_DETA] += somA[0] + sE;
    acc[base + FD_DETA2] += somA[1] + sEE;
    acc[base + FD_DBETA] += 0.25 * sB;
    acc[base + FD_DETADBETA] += 0.25 * (somB[0] + sEB);
    acc[base + FD_DBETA2] += -0.0625 * sBB;
    if (entropy && i < 2) {
      // ∫ g σ dx = Σ_m W_m 2m g^{(2m−2)}(η)  (the T·S identity; see the header)
      let g = 0, ge = 0, gb = 0, gee = 0, geb = 0;
      for (let m = M; m >= 1; m--) {
        const w = 2 * m * SOMM_W[m];
        g += w * FACT[2 * m - 2] * somA[2 * m - 2];
        ge += w * FACT[2 * m - 1] * somA[2 * m - 1];
        gee += w * FACT[2 * m] * somA[2 * m];
        gb += w * FACT[2 * m - 2] * somB[2 * m - 2];
        geb += w * FACT[2 * m - 1] * somB[2 * m - 1];
      }
      const o = FD_ENTROPY_OFFSET + 5 * i;
      acc[o + FD_G] += g;
      acc[o + FD_G_DETA] += ge;
      acc[o + FD_G_DBETA] += 0.25 * gb;
      acc[o + FD_G_DETA2] += gee;
      acc[o + FD_G_DETADBETA] += 0.25 * geb;
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Public routines.

/**
 * The generalized integrals of orders k0, k0+1, k0+2 and their derivatives at one (η, β), written
 * into out[0..17]: out[6i + q] for order k0 + i and quantity q ∈ {FD_F, FD_DETA, FD_DBETA,
 * FD_DETA2, FD_DETADBETA, FD_DBETA2}. k0 ∈ {−1/2, 0, 1/2, 1} (default 1/2: F_{1/2}, F_{3/2},
 * F_{5/2}). No allocation. With `second` false the second derivatives are left at 0 (faster).
 */
export function generalizedFermiDiracSet(
  eta: number,
  beta: number,
  out: Float64Array,
  flags = FD_SECOND,
  k0 = 0.5,
): Float64Array {
  for (let i = 0; i < FD_SET_LENGTH; i++) out[i] = 0;
  const twoK0 = Math.round(2 * k0);
  if (eta >= SOMMERFELD_ETA) {
    addOriginExact(twoK0, eta, beta, out);
    addSommerfeld(twoK0, eta, beta, out, (flags & FD_ENTROPY) !== 0);
  } else {
    currentTarget = (flags & FD_LIGHT) !== 0 ? LIGHT_TARGET_LOG : (flags & FD_FAST) !== 0 ? FAST_TARGET_LOG : TARGET_LOG;
    const split = buildMesh(eta, beta, 0.5 * twoK0);
    integrateMesh(twoK0, eta, beta, out, flags);
    currentTarget = TARGET_LOG;
    if (split) addOriginExact(twoK0, eta, beta, out);
  }
  if ((flags & FD_SECOND) === 0) out[3] = out[4] = out[5] = out[9] = out[10] = out[11] = out[15] = out[16] = out[17] = 0;
  return out;
}

const scratchSet = new Float64Array(FD_SET_LENGTH);

/**
 * Generalized Fermi–Dirac integral F_k(η, β) = ∫₀^∞ x^k (1+βx/2)^{1/2}/(e^{x−η}+1) dx for
 * k ∈ {−1/2, 0, 1/2, 1, 3/2, 2, 5/2, 3}, β ≥ 0.
 */
export function generalizedFermiDirac(k: number, eta: number, beta: number): number {
  const twoK = Math.round(2 * k);
  if (twoK !== 2 * k || twoK < -1 || twoK > 6) {
    throw new RangeError(`generalizedFermiDirac: order k = ${k} is not one of −1/2, 0, 1/2, …, 3`);
  }
  if (!(beta >= 0) || !Number.isFinite(beta)) {
    throw new RangeError(`generalizedFermiDirac: β = ${beta} must be finite and ≥ 0`);
  }
  if (Number.isNaN(eta)) return NaN;
  const twoK0 = twoK <= 2 ? twoK : twoK % 2 === 0 ? 2 : 1;
  const i = (twoK - twoK0) / 2;
  generalizedFermiDiracSet(eta, beta, scratchSet, 0, twoK0 / 2);
  return scratchSet[6 * i + FD_F];
}

/**
 * Complete Fermi–Dirac integral F_j(η) = ∫₀^∞ x^j/(e^{x−η}+1) dx (not normalized by Γ(j+1)),
 * for j ∈ {−1/2, 0, 1/2, 1, 3/2, 2, 5/2, 3}.
 */
export function fermiDirac(j: number, eta: number): number {
  return generalizedFermiDirac(j, eta, 0);
}
