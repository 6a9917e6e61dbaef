/**
 * The table method's per-point loop in AssemblyScript, compiled to WebAssembly (scripts/build-wasm.ts):
 * the interpolation of free-energy-table.ts `tablePairGas` (biquintic Hermite of the free energy,
 * Timmes & Swesty 2000, with the analytic references of `kernelPairParts`), the ion (Sackur–Tetrode),
 * photon (Planck) and Coulomb (Potekhin & Chabrier 2000 liquid OCP, linear mixing) terms and the
 * derived quantities and warnings of state.ts — the same formulas in the same order as the
 * JavaScript per-point path (PointKernel + storePoint), which stays the reference, except that
 * divisions by ρ, Abar and T are multiplications by their reciprocals and Γ takes one cube root:
 * results agree to rounding (this module's maths library also differs from V8's in the last bit;
 * tests bound the difference). See eos/README.md "Table method" for the formulas and their sources.
 * Memory: eos/wasm/table-batch.ts lays out everything above heapBase(); pointers are byte offsets.
 * Nothing here allocates.
 */

// constants (set by JS from eos/constants.ts and the modules that derive them, so they are the same doubles)
let AVOGADRO: f64 = 0, BOLTZMANN_K: f64 = 0, ELECTRON_REST_ENERGY: f64 = 0, RADIATION_A: f64 = 0;
let R_ION: f64 = 0, LN_ION_QC: f64 = 0, C2: f64 = 0, PAIR_Z_C: f64 = 0, LN_K_OVER_MEC2: f64 = 0, LN_HALF_AVOGADRO: f64 = 0;
let LN_SHARE_FLOOR: f64 = 0, E2_OVER_K: f64 = 0, FOUR_PI_OVER_3_NA: f64 = 0, OCP_A3: f64 = 0, INV_SQRT_A2: f64 = 0, HALF_LN_A2: f64 = 0;
let RYDBERG: f64 = 0, SAHA_FACTOR: f64 = 0, BOHR_RADIUS: f64 = 0, LN_FOUR_PI_OVER_3_NA: f64 = 0;

const SHARE_FLOOR: f64 = 1e-30;
const PAIR_TAPER_BETA: f64 = 0.7;
const PAIR_TAPER_POWER: f64 = 3;
const STRIDE: i32 = 33;
const OCP_A1: f64 = -0.907, OCP_A2: f64 = 0.62954, OCP_B1: f64 = 4.56e-3, OCP_B2: f64 = 211.6, OCP_B3: f64 = -1e-4, OCP_B4: f64 = 4.62e-3;
const INV_B2: f64 = 1 / OCP_B2, INV_B4: f64 = 1 / OCP_B4;
const GAMMA_MELT: f64 = 175;
const NEUTRON_DRIP_DENSITY: f64 = 4e11;
const DENSITY_MIN: f64 = 1e-12, DENSITY_MAX: f64 = 1e15, TEMPERATURE_MIN: f64 = 1e3, TEMPERATURE_MAX: f64 = 1e13;

export function heapBase(): usize { return __heap_base; }

export function setConstants(p: usize): void {
  AVOGADRO = load<f64>(p); BOLTZMANN_K = load<f64>(p, 8); ELECTRON_REST_ENERGY = load<f64>(p, 16); RADIATION_A = load<f64>(p, 24);
  R_ION = load<f64>(p, 32); LN_ION_QC = load<f64>(p, 40); C2 = load<f64>(p, 48); PAIR_Z_C = load<f64>(p, 56);
  LN_K_OVER_MEC2 = load<f64>(p, 64); LN_HALF_AVOGADRO = load<f64>(p, 72); LN_SHARE_FLOOR = load<f64>(p, 80); E2_OVER_K = load<f64>(p, 88);
  FOUR_PI_OVER_3_NA = load<f64>(p, 96); OCP_A3 = load<f64>(p, 104); INV_SQRT_A2 = load<f64>(p, 112); HALF_LN_A2 = load<f64>(p, 120);
  RYDBERG = load<f64>(p, 128); SAHA_FACTOR = load<f64>(p, 136); BOHR_RADIUS = load<f64>(p, 144);
  LN_FOUR_PI_OVER_3_NA = Math.log(FOUR_PI_OVER_3_NA);
}

// table
let tData: usize = 0, tCold: usize = 0, nD: i32 = 0, nT: i32 = 0;
let gLogDMin: f64 = 0, gPpdD: f64 = 0, invHu: f64 = 0;
let ax0: f64 = 0, ax1: f64 = 0, ax2: f64 = 0, ax3: f64 = 0, ax4: f64 = 0, ax5: f64 = 0, ax6: f64 = 0, ax7: f64 = 0, ax8: f64 = 0, ax9: f64 = 0;

export function setTable(data: usize, cold: usize, axis: usize, nd: i32, nt: i32, logDMin: f64, ppdD: f64): void {
  tData = data; tCold = cold; nD = nd; nT = nt; gLogDMin = logDMin; gPpdD = ppdD;
  invHu = ppdD / Math.LN10; // 1/h_u, h_u the node spacing in ln(ρYe)
  ax0 = load<f64>(axis); ax1 = load<f64>(axis, 8); ax2 = load<f64>(axis, 16); ax3 = load<f64>(axis, 24); ax4 = load<f64>(axis, 32);
  ax5 = load<f64>(axis, 40); ax6 = load<f64>(axis, 48); ax7 = load<f64>(axis, 56); ax8 = load<f64>(axis, 64); ax9 = load<f64>(axis, 72);
}

// @ts-ignore: decorator
@inline function D(o: i32): f64 { return load<f64>(tData + (<usize>o << 3)); }

// @ts-ignore: decorator
@inline function DS(o: i32): v128 { return v128.load64_splat(tData + (<usize>o << 3)); }
// @ts-ignore: decorator
@inline function DV(o: i32): v128 { return v128.load(tData + (<usize>o << 3)); }
// @ts-ignore: decorator
@inline function mul(a: v128, b: v128): v128 { return f64x2.mul(a, b); }
// @ts-ignore: decorator
@inline function add(a: v128, b: v128): v128 { return f64x2.add(a, b); }
// @ts-ignore: decorator
@inline function sub(a: v128, b: v128): v128 { return f64x2.sub(a, b); }
// @ts-ignore: decorator
@inline function K(c: f64): v128 { return f64x2.splat(c); }
/** (a₀, b₀) */
// @ts-ignore: decorator
@inline function lows(a: v128, b: v128): v128 { return v128.shuffle<f64>(a, b, 0, 2); }
// @ts-ignore: decorator
@inline function pair(a: f64, b: f64): v128 { return f64x2.replace_lane(f64x2.splat(a), 1, b); }
// @ts-ignore: decorator
@inline function lo(v: v128): f64 { return f64x2.extract_lane(v, 0); }
// @ts-ignore: decorator
@inline function hi(v: v128): f64 { return f64x2.extract_lane(v, 1); }
/** Σ of lanes in the order ((a₀ + a₁) + b₀) + b₁. */
// @ts-ignore: decorator
@inline function sum4(a: v128, b: v128): f64 { return lo(a) + hi(a) + lo(b) + hi(b); }

// pair-gas results of one point (globals: no memory traffic)
let pP: f64 = 0, pPT: f64 = 0, pU: f64 = 0, pUD: f64 = 0, pUT: f64 = 0, pS: f64 = 0, pSD: f64 = 0, pST: f64 = 0, pPD: f64 = 0;
let pEta: f64 = 0, pNe: f64 = 0, pNp: f64 = 0;
let qP: f64 = 0, qPD: f64 = 0, qPT: f64 = 0, qU: f64 = 0, qUD: f64 = 0, qUT: f64 = 0, qS: f64 = 0, qSD: f64 = 0, qST: f64 = 0;
// kernelPairParts
let kp0: f64 = 0, kp1: f64 = 0, kp2: f64 = 0, kp3: f64 = 0, kp4: f64 = 0, kp5: f64 = 0, kp6: f64 = 0, kp7: f64 = 0, kp9: f64 = 0, kp10: f64 = 0, kp11: f64 = 0;

function kernelPairParts(T: f64, u: f64, v: f64): bool {
  const beta = (BOLTZMANN_K * T) / ELECTRON_REST_ENERGY;
  const S = 1 + beta * (15.0 / 8 + beta * (105.0 / 128));
  const S1 = beta * (15.0 / 8 + beta * (105.0 / 64));
  const Q = f64x2.div(pair(1, S1), pair(beta, S)); // 1/β, S1/S
  const ib = lo(Q), s1s = hi(Q);
  const lnS = Math.log(S);
  const lnBeta = v + LN_K_OVER_MEC2;
  const Lr = PAIR_Z_C + 1.5 * lnBeta + lnS;
  const L1r = 1.5 + s1s;
  const L1 = L1r + ib;
  const lnHalfN0 = u + LN_HALF_AVOGADRO;
  const lamR = lnHalfN0 - Lr;
  const lam = lamR + ib;
  // the taper first: its chain does not wait for the one below (the processor overlaps them)
  let tapered = false;
  if (beta >= 0.01) {
    const bt = beta / PAIR_TAPER_BETA;
    const b4 = bt * bt * bt;
    const lamT = lam + b4;
    if (lamT <= 40) {
      tapered = true;
      const S2 = beta * beta * (105.0 / 64);
      const LT1 = L1 - PAIR_TAPER_POWER * b4;
      const LT2 = -ib + s1s + S2 / S - s1s * s1s - PAIR_TAPER_POWER * PAIR_TAPER_POWER * b4;
      const a = Math.exp(lamT);
      const r = a > 1e8 ? a * (1 + 0.5 / (a * a)) : Math.sqrt(1 + a * a);
      const QP = f64x2.div(pair(1, -1), pair(a * (a + r), a * r));
      const q = lo(QP);
      const P0 = Math.log1p(0.5 * q) - q;
      const P1 = q;
      const P2 = hi(QP);
      const E = BOLTZMANN_K * AVOGADRO * T;
      kp5 = E * P0;
      kp6 = E * P1;
      kp7 = E * (P0 - LT1 * P1);
      kp9 = E * (P1 - LT1 * P2);
      kp10 = E * (P0 - 2 * LT1 * P1 - LT2 * P1 + LT1 * LT1 * P2);
    }
  }
  let etaB: f64, g1: f64, B: f64;
  if (lam > 20) {
    // e2 < 4.3e-18 < 2⁻⁵³: 1 + e2 rounds to 1, so sqrt(1 + e2) − 1 and log1p of it are 0, 1 − e2/2 is 1,
    // and log1p(e2) returns e2 itself (musl's log1p below 2⁻⁵³): the same doubles as the full formulas
    const e2 = Math.exp(-2 * lam);
    etaB = lamR + Math.LN2;
    g1 = 1;
    B = -0.5 * e2;
  } else {
    const a = Math.exp(lam);
    const r = Math.sqrt(1 + a * a);
    etaB = Math.log(a + r) - ib;
    g1 = a / r;
    B = lam - 0.5 * Math.log1p(a * a);
  }
  kp0 = etaB;
  kp1 = B;
  const rho = -etaB - lamR - 2 * ib - Math.LN2;
  const rhoU = -g1 - 1, rhoV = L1 * (1 + g1);
  const dr = rho - LN_SHARE_FLOOR;
  kp11 = dr;
  if (dr < -40) {
    // exp(dr) < 4.3e-18 is below half an ulp of LN_SHARE_FLOOR (ln 1e-30 ≈ −69.1, ulp 1.4e-14): the sum is LN_SHARE_FLOOR
    kp2 = LN_SHARE_FLOOR; kp3 = 0; kp4 = 0;
  } else if (dr > 40) {
    kp2 = rho; kp3 = rhoU; kp4 = rhoV;
  } else {
    const ed = Math.exp(-Math.abs(dr));
    const sig = dr > 0 ? 1 / (1 + ed) : ed / (1 + ed);
    kp2 = (dr > 0 ? rho : LN_SHARE_FLOOR) + Math.log1p(ed);
    kp3 = sig * rhoU;
    kp4 = sig * rhoV;
  }
  return tapered;
}

// Points are taken in blocks: pass 1 locates every point's table cell (into a scratch slot) and
// touches the cache lines of its four nodes in one tight loop of independent loads, so that on
// random states their memory misses overlap instead of following one another; pass 2 interpolates.
const BLOCK: i32 = 16;
/** f64 per scratch slot: node offset (−1: no cell), i, x, y, u, v, 1/h_v, h_v. */
const SLOT: i32 = 8;
const scratch: usize = memory.data(BLOCK * SLOT * 8);
/** f64 per point of a block for pass 2a's results: kp0 … kp11, the taper flag, then Coulomb U, C, S, Γ, its Zbar exponent. */
const PART: i32 = 18;
const parts: usize = memory.data(BLOCK * PART * 8, 16);
/** Keeps the touching loads alive (never read for results). */
let touchSink: i32 = 0;

// @ts-ignore: decorator
@inline function touchNodePair(p: usize): i32 {
  // two adjacent nodes, 2 × 33 f64 = 528 bytes: one byte of each 64-byte line
  return load<u8>(p) ^ load<u8>(p, 64) ^ load<u8>(p, 128) ^ load<u8>(p, 192) ^ load<u8>(p, 256) ^
    load<u8>(p, 320) ^ load<u8>(p, 384) ^ load<u8>(p, 448) ^ load<u8>(p, 512) ^ load<u8>(p, 527);
}

/** Touches the cache lines of the cells in slots 0..m−1. */
function touchBlock(m: i32): void {
  let acc: i32 = 0;
  const rowBytes = <usize>(nT * STRIDE) << 3;
  for (let k = 0; k < m; k++) {
    const oA = <i32>load<f64>(scratch + (<usize>(k * SLOT) << 3));
    if (oA < 0) continue;
    const pA = tData + (<usize>oA << 3);
    acc ^= touchNodePair(pA) ^ touchNodePair(pA + rowBytes);
  }
  touchSink ^= acc;
}

/** The first part of free-energy-table.ts tablePairGas: the cell of (d, T) into scratch slot k; 0, or 1 outside the table. */
function locate(d: f64, T: f64, k: i32): i32 {
  const slot = scratch + (<usize>(k * SLOT) << 3);
  const u = Math.log(d);
  const v = Math.log(T);
  const fx = (u - gLogDMin * Math.LN10) * invHu;
  const nA = ax5, nB = ax6, nT1 = ax7;
  let fy = (v - ax0) * ax3;
  let invHv = ax3, hv = ax8;
  let jOff: f64 = 0;
  if (fy > nA) {
    const fb = (v - ax1) * ax4;
    if (fb <= nB) {
      fy = fb; jOff = nA; invHv = ax4; hv = ax9;
    } else {
      fy = (v - ax2) * ax3; jOff = nA + nB;
    }
  }
  if (!(fx >= -1e-9 && fx <= <f64>(nD - 1) + 1e-9 && fy + jOff >= -1e-9 && fy + jOff <= nT1 + 1e-9)) {
    store<f64>(slot, -1);
    return 1;
  }
  let i = <i32>Math.floor(fx);
  let j = <i32>(Math.floor(fy) + jOff);
  if (i > nD - 2) i = nD - 2;
  if (j > nT - 2) j = nT - 2;
  if (i < 0) i = 0;
  if (j < 0) j = 0;
  store<f64>(slot, <f64>((i * nT + j) * STRIDE)); store<f64>(slot, <f64>i, 8);
  store<f64>(slot, fx - <f64>i, 16); store<f64>(slot, fy + jOff - <f64>j, 24);
  store<f64>(slot, u, 32); store<f64>(slot, v, 40); store<f64>(slot, invHv, 48); store<f64>(slot, hv, 56);
  return 0;
}

/** The rest of tablePairGas at the cell in scratch slot k, with the references pass 2a left in `parts`: the pair gas into the p…, q… globals. */
function tablePairGas(d: f64, T: f64, k: i32): void {
  const slot = scratch + (<usize>(k * SLOT) << 3);
  const oA = <i32>load<f64>(slot), i = <i32>load<f64>(slot, 8);
  const x = load<f64>(slot, 16), y = load<f64>(slot, 24);
  const invHv = load<f64>(slot, 48), hv = load<f64>(slot, 56);
  const mx = 1 - x;
  const my = 1 - y;
  // the quintic Hermite basis of x and of y in the two lanes (the same polynomials, the same order of operations)
  const Z = pair(x, y), Z2 = mul(Z, Z), Z3 = mul(Z2, Z), Z4 = mul(Z3, Z), Z5 = mul(Z4, Z);
  const M = pair(mx, my), M2 = mul(M, M), M3 = mul(M2, M), M4 = mul(M3, M), M5 = mul(M4, M);
  const A00 = sub(add(sub(K(1), mul(K(10), Z3)), mul(K(15), Z4)), mul(K(6), Z5));
  const A01 = sub(add(sub(Z, mul(K(6), Z3)), mul(K(8), Z4)), mul(K(3), Z5));
  const A02 = mul(K(0.5), sub(add(sub(Z2, mul(K(3), Z3)), mul(K(3), Z4)), Z5));
  const A10 = sub(add(sub(K(1), mul(K(10), M3)), mul(K(15), M4)), mul(K(6), M5));
  const A11 = f64x2.neg(sub(add(sub(M, mul(K(6), M3)), mul(K(8), M4)), mul(K(3), M5)));
  const A12 = mul(K(0.5), sub(add(sub(M2, mul(K(3), M3)), mul(K(3), M4)), M5));
  const B00 = sub(add(mul(K(-30), Z2), mul(K(60), Z3)), mul(K(30), Z4));
  const B01 = sub(add(sub(K(1), mul(K(18), Z2)), mul(K(32), Z3)), mul(K(15), Z4));
  const B02 = mul(K(0.5), sub(add(sub(mul(K(2), Z), mul(K(9), Z2)), mul(K(12), Z3)), mul(K(5), Z4)));
  const B10 = add(sub(mul(K(30), M2), mul(K(60), M3)), mul(K(30), M4));
  const B11 = sub(add(sub(K(1), mul(K(18), M2)), mul(K(32), M3)), mul(K(15), M4));
  const B12 = mul(K(-0.5), sub(add(sub(mul(K(2), M), mul(K(9), M2)), mul(K(12), M3)), mul(K(5), M4)));
  const p00 = hi(A00), p01u = hi(A01), p02u = hi(A02), p10 = hi(A10), p11u = hi(A11), p12u = hi(A12);
  const q00 = hi(B00), q01u = hi(B01), q02u = hi(B02), q10 = hi(B10), q11u = hi(B11), q12u = hi(B12);
  const x2 = lo(Z2), x3 = lo(Z3), m2 = lo(M2), m3 = lo(M3);
  const y2 = hi(Z2), y3 = hi(Z3), n2 = hi(M2), n3 = hi(M3);
  const r00 = -60 * y + 180 * y2 - 120 * y3, r01u = -36 * y + 96 * y2 - 60 * y3, r02u = 0.5 * (2 - 18 * y + 36 * y2 - 20 * y3);
  const r10 = -60 * my + 180 * n2 - 120 * n3, r11u = -(-36 * my + 96 * n2 - 60 * n3), r12u = 0.5 * (2 - 18 * my + 36 * n2 - 20 * n3);
  const hv2 = hv * hv;
  const p01 = p01u * hv, p02 = p02u * hv2, p11 = p11u * hv, p12 = p12u * hv2;
  const q01 = q01u * hv, q02 = q02u * hv2, q11 = q11u * hv, q12 = q12u * hv2;
  const r01 = r01u * hv, r02 = r02u * hv2, r11 = r11u * hv, r12 = r12u * hv2;

  // lanes (value, ∂/∂x): the x-basis pairs (a, b); the same sums in the same order as the scalar form
  const c00 = lows(A00, B00), c01 = lows(A01, B01), c02 = lows(A02, B02), c10 = lows(A10, B10), c11 = lows(A11, B11), c12 = lows(A12, B12);
  const oB = oA + nT * STRIDE, oC = oA + STRIDE, oD = oB + STRIDE;
  let V: v128, W: v128, X: v128;
  V = add(add(add(add(add(mul(DS(oA), c00), mul(DS(oA + 1), c01)), mul(DS(oA + 3), c02)), mul(DS(oB), c10)), mul(DS(oB + 1), c11)), mul(DS(oB + 3), c12));
  W = add(add(add(add(add(mul(DS(oA + 2), c00), mul(DS(oA + 4), c01)), mul(DS(oA + 6), c02)), mul(DS(oB + 2), c10)), mul(DS(oB + 4), c11)), mul(DS(oB + 6), c12));
  X = add(add(add(add(add(mul(DS(oA + 5), c00), mul(DS(oA + 7), c01)), mul(DS(oA + 8), c02)), mul(DS(oB + 5), c10)), mul(DS(oB + 7), c11)), mul(DS(oB + 8), c12));
  let G0 = add(add(mul(V, f64x2.splat(p00)), mul(W, f64x2.splat(p01))), mul(X, f64x2.splat(p02)));
  let G1 = add(add(mul(V, f64x2.splat(q00)), mul(W, f64x2.splat(q01))), mul(X, f64x2.splat(q02)));
  let G2 = add(add(mul(V, f64x2.splat(r00)), mul(W, f64x2.splat(r01))), mul(X, f64x2.splat(r02)));
  V = add(add(add(add(add(mul(DS(oC), c00), mul(DS(oC + 1), c01)), mul(DS(oC + 3), c02)), mul(DS(oD), c10)), mul(DS(oD + 1), c11)), mul(DS(oD + 3), c12));
  W = add(add(add(add(add(mul(DS(oC + 2), c00), mul(DS(oC + 4), c01)), mul(DS(oC + 6), c02)), mul(DS(oD + 2), c10)), mul(DS(oD + 4), c11)), mul(DS(oD + 6), c12));
  X = add(add(add(add(add(mul(DS(oC + 5), c00), mul(DS(oC + 7), c01)), mul(DS(oC + 8), c02)), mul(DS(oD + 5), c10)), mul(DS(oD + 7), c11)), mul(DS(oD + 8), c12));
  G0 = add(G0, add(add(mul(V, f64x2.splat(p10)), mul(W, f64x2.splat(p11))), mul(X, f64x2.splat(p12))));
  G1 = add(G1, add(add(mul(V, f64x2.splat(q10)), mul(W, f64x2.splat(q11))), mul(X, f64x2.splat(q12))));
  G2 = add(G2, add(add(mul(V, f64x2.splat(r10)), mul(W, f64x2.splat(r11))), mul(X, f64x2.splat(r12))));
  let F = lo(G0), Fx = hi(G0), Fy = lo(G1), Fxy = hi(G1), Fyy = lo(G2);
  const Hu = Fx * invHu, Hv = Fy * invHv;
  const Huv = Fxy * invHu * invHv, Hvv = Fyy * invHv * invHv;
  F = T * F;
  let Fu = T * Hu;
  let Fv = F + T * Hv;
  let Fuv = T * (Hu + Huv);
  let Fvv = Fv + T * (Hv + Hvv);
  {
    const c0 = tCold + (<usize>(3 * i) << 3);
    const a00 = lo(A00), a01 = lo(A01), a02 = lo(A02), a10 = lo(A10), a11 = lo(A11), a12 = lo(A12);
    const b00d = lo(B00), b01d = lo(B01), b02d = lo(B02), b10d = lo(B10), b11d = lo(B11), b12d = lo(B12);
    F += load<f64>(c0) * a00 + load<f64>(c0, 8) * a01 + load<f64>(c0, 16) * a02 + load<f64>(c0, 24) * a10 + load<f64>(c0, 32) * a11 + load<f64>(c0, 40) * a12;
    Fu += (load<f64>(c0) * b00d + load<f64>(c0, 8) * b01d + load<f64>(c0, 16) * b02d + load<f64>(c0, 24) * b10d + load<f64>(c0, 32) * b11d + load<f64>(c0, 40) * b12d) * invHu;
  }
  const pp = parts + (<usize>(k * PART) << 3);
  kp0 = load<f64>(pp); kp1 = load<f64>(pp, 8); kp2 = load<f64>(pp, 16); kp3 = load<f64>(pp, 24); kp4 = load<f64>(pp, 32); kp11 = load<f64>(pp, 80);
  if (load<f64>(pp, 88) != 0) {
    F += load<f64>(pp, 40); Fu += load<f64>(pp, 48); Fv += load<f64>(pp, 56);
    Fuv += load<f64>(pp, 64); Fvv += load<f64>(pp, 72);
  }
  const invT = 1 / T;
  const P = d * Fu;
  const eps = F - Fv;
  const sig = -Fv * invT;
  pP = P;
  pPT = d * Fuv * invT;
  pU = d * eps;
  pUD = eps + Fu - Fuv;
  pUT = d * (Fv - Fvv) * invT;
  pS = d * sig;
  pSD = sig - Fuv * invT;
  pST = d * (Fv - Fvv) * invT * invT;

  const e0 = 2 * x3 - 3 * x2 + 1, e1 = x3 - 2 * x2 + x, e2 = 1 - e0, e3 = -(m3 - 2 * m2 + mx);
  const e0d = 6 * x2 - 6 * x, e1d = 3 * x2 - 4 * x + 1, e2d = -e0d, e3d = 3 * m2 - 4 * mx + 1;
  const f0 = 2 * y3 - 3 * y2 + 1, f1 = (y3 - 2 * y2 + y) * hv, f2 = 1 - f0, f3 = -(n3 - 2 * n2 + my) * hv;
  const f0d = 6 * y2 - 6 * y, f1d = (3 * y2 - 4 * y + 1) * hv, f2d = -f0d, f3d = (3 * n2 - 4 * my + 1) * hv;
  const f0v = f64x2.splat(f0), f1v = f64x2.splat(f1), f2v = f64x2.splat(f2), f3v = f64x2.splat(f3);
  const E01 = pair(e0, e1), E23 = pair(e2, e3);
  {
    const q = 9;
    const S1 = add(add(mul(DV(oA + q), f0v), mul(DV(oA + q + 2), f1v)), add(mul(DV(oC + q), f2v), mul(DV(oC + q + 2), f3v)));
    const S2 = add(add(mul(DV(oB + q), f0v), mul(DV(oB + q + 2), f1v)), add(mul(DV(oD + q), f2v), mul(DV(oD + q + 2), f3v)));
    pEta = sum4(mul(S1, E01), mul(S2, E23)) + kp0;
  }
  {
    const q = 13;
    const S1 = add(add(mul(DV(oA + q), f0v), mul(DV(oA + q + 2), f1v)), add(mul(DV(oC + q), f2v), mul(DV(oC + q + 2), f3v)));
    const S2 = add(add(mul(DV(oB + q), f0v), mul(DV(oB + q + 2), f1v)), add(mul(DV(oD + q), f2v), mul(DV(oD + q + 2), f3v)));
    const lnEtaU = sum4(mul(S1, E01), mul(S2, E23)) + kp1;
    pPD = AVOGADRO * BOLTZMANN_K * T * Math.exp(lnEtaU);
  }
  if (kp11 < -30) {
    pNp = 0;
    pNe = d * AVOGADRO;
    qP = 0; qPD = 0; qPT = 0;
    qU = 0; qUD = 0; qUT = 0;
    qS = 0; qSD = 0; qST = 0;
  } else {
  const f0dv = f64x2.splat(f0d), f1dv = f64x2.splat(f1d), f2dv = f64x2.splat(f2d), f3dv = f64x2.splat(f3d);
  const E01d = pair(e0d, e1d), E23d = pair(e2d, e3d);
  for (let s = 0; s < 4; s++) {
    const q = 17 + 4 * s;
    const S1 = add(add(mul(DV(oA + q), f0v), mul(DV(oA + q + 2), f1v)), add(mul(DV(oC + q), f2v), mul(DV(oC + q + 2), f3v)));
    const S2 = add(add(mul(DV(oB + q), f0v), mul(DV(oB + q + 2), f1v)), add(mul(DV(oD + q), f2v), mul(DV(oD + q + 2), f3v)));
    const T1 = add(add(mul(DV(oA + q), f0dv), mul(DV(oA + q + 2), f1dv)), add(mul(DV(oC + q), f2dv), mul(DV(oC + q + 2), f3dv)));
    const T2 = add(add(mul(DV(oB + q), f0dv), mul(DV(oB + q + 2), f1dv)), add(mul(DV(oD + q), f2dv), mul(DV(oD + q + 2), f3dv)));
    const L = sum4(mul(S1, E01), mul(S2, E23)) + kp2;
    const Lu = sum4(mul(S1, E01d), mul(S2, E23d)) * invHu + kp3;
    const Lv = sum4(mul(T1, E01), mul(T2, E23)) * invHv + kp4;
    const ex = L - LN_SHARE_FLOOR < 1e-6 ? SHARE_FLOOR : Math.exp(L);
    let r = ex - SHARE_FLOOR;
    if (r < 1e-290) r = 0;
    const rd = r == 0 ? 0 : (ex * Lu) / d;
    const rT = r == 0 ? 0 : ex * Lv * invT;
    if (s == 0) {
      const n0 = d * AVOGADRO;
      pNp = r * n0;
      pNe = r * n0 + n0;
    } else if (s == 1) {
      qP = r * P;
      qPD = rd * P + r * pPD;
      qPT = rT * P + r * pPT;
    } else if (s == 2) {
      qU = r * pU;
      qUD = rd * pU + r * pUD;
      qUT = rT * pU + r * pUT;
    } else {
      qS = r * pS;
      qSD = rd * pS + r * pSD;
      qST = rT * pS + r * pST;
    }
  }
  }
}

// Coulomb: coulomb.ts ocpLiquid (Potekhin & Chabrier 2000 liquid OCP) and its cancellation-free series
const ASINH_SERIES: StaticArray<f64> = [0.66666666666666663, -0.20000000000000001, 0.10714285714285714, -0.069444444444444448, 0.049715909090909088, -0.037860576923076920, 0.030078125000000001, -0.024643841911764705, 0.020671643708881578, -0.017663864862351192, 0.015321482782778532, -0.013455047607421874, 0.011939278355351201, -0.010688346007774616];
const ATAN_SERIES: StaticArray<f64> = [0.33333333333333331, -0.20000000000000001, 0.14285714285714285, -0.11111111111111110, 0.090909090909090912, -0.076923076923076927, 0.066666666666666666, -0.058823529411764705, 0.052631578947368418, -0.047619047619047616, 0.043478260869565216, -0.040000000000000001, 0.037037037037037035, -0.034482758620689655];
const LOG1P_SERIES: StaticArray<f64> = [0.50000000000000000, -0.33333333333333331, 0.25000000000000000, -0.20000000000000001, 0.16666666666666666, -0.14285714285714285, 0.12500000000000000, -0.11111111111111110, 0.10000000000000001, -0.090909090909090912, 0.083333333333333329, -0.076923076923076927, 0.071428571428571425, -0.066666666666666666, 0.062500000000000000, -0.058823529411764705, 0.055555555555555552, -0.052631578947368418];
function series(c: StaticArray<f64>, t0: f64, r: f64): f64 {
  let term = t0;
  let sum: f64 = 0;
  for (let k = 0; k < c.length; k++) {
    const t = unchecked(c[k]) * term;
    sum += t;
    if (Math.abs(t) < 1e-17 * Math.abs(sum)) break;
    term *= r;
  }
  return sum;
}
function sqrtAsinhDifference(x: f64): f64 {
  if (x < 0.2) return series(ASINH_SERIES, x * x * x, x * x);
  return x * Math.sqrt(1 + x * x) - Math.asinh(x);
}
function minusArctan(y: f64): f64 {
  if (y < 0.2) return series(ATAN_SERIES, y * y * y, y * y);
  return y - Math.atan(y);
}
function minusLog1p(q: f64): f64 {
  if (q < 0.1) return series(LOG1P_SERIES, q * q, q);
  return q - Math.log1p(q);
}
let ocpU: f64 = 0, ocpC: f64 = 0, ocpS: f64 = 0;
let lnZbar: f64 = 0, lnZbarOf: f64 = 0;
function ocpLiquid(G: f64): void {
  const A1 = OCP_A1, A2 = OCP_A2, A3 = OCP_A3, B1 = OCP_B1, B2 = OCP_B2, B3 = OCP_B3, B4 = OCP_B4;
  // square roots and reciprocals two lanes at a time (each lane rounds as the scalar operation)
  const R = f64x2.sqrt(pair(G, A2 + G));
  const sG = lo(R), sA = hi(R);
  const G32 = G * sG;
  const G2 = G * G;
  const I1 = f64x2.div(K(1), pair(sA, 1 + G)), I2 = f64x2.div(K(1), pair(B2 + G, B4 + G2));
  const iA = lo(I1), i1 = hi(I1), i2 = lo(I2), i4 = hi(I2);
  const u = G32 * (A1 * iA + A3 * i1) + B1 * G2 * i2 + B3 * G2 * i4;
  const c =
    -0.5 * A1 * A2 * G32 * iA * iA * iA +
    0.5 * A3 * G32 * (G - 1) * i1 * i1 -
    B1 * B2 * G2 * i2 * i2 +
    B3 * G2 * (G2 - B4) * i4 * i4;
  const x = sG * INV_SQRT_A2;
  const q = G * INV_B2;
  const lnB4 = Math.log1p(G2 * INV_B4);
  let s: f64;
  if (G > 1) {
    s =
      A1 * A2 * (Math.log(sG + sA) - HALF_LN_A2 - sG * iA) +
      A3 * (2 * Math.atan(sG) - sG * (G + 2) * i1) +
      B1 * B2 * (Math.log1p(q) - G * i2) +
      B3 * G2 * i4 -
      0.5 * B3 * lnB4;
  } else {
    const f = A1 * A2 * sqrtAsinhDifference(x) + 2 * A3 * minusArctan(sG) + B1 * B2 * minusLog1p(q) + 0.5 * B3 * lnB4;
    s = u - f;
  }
  ocpU = u; ocpC = c; ocpS = s;
}

// Output: column-major blocks of `stride` f64 in the order of OUTPUT_COLUMNS in eos/wasm/table-batch.ts:
// totals 0..12 (P e s ∂P/∂ρ ∂P/∂T ∂e/∂ρ ∂e/∂T ∂s/∂ρ ∂s/∂T ∂P/∂Abar ∂P/∂Zbar ∂e/∂Abar ∂e/∂Zbar),
// derived 13..25 (cv cp Γ1 Γ3 χρ χT ∇ad cs η n₋ n₊ Γ P_rad/P), and with the breakdown 26..70 the five
// components (electrons, positrons, ions, photons, Coulomb) × (P e s ∂P/∂ρ ∂P/∂T ∂e/∂ρ ∂e/∂T ∂s/∂ρ ∂s/∂T).
// warn: the WARNING bits of state.ts per point (u8); status: 0 computed, 1 density or temperature
// outside the domain, 2 outside the table (the caller writes the statuses and messages).
// @ts-ignore: decorator
@inline function put(out: usize, stride: i32, col: i32, i: i32, v: f64): void { store<f64>(out + ((<usize>col * <usize>stride + <usize>i) << 3), v); }

/**
 * Evaluates n points. inp: columns ρ, T, Abar, Zbar, Z_max (5 blocks of `stride` ≥ n f64; out the
 * same: a stride that is not a multiple of 512 keeps the columns out of one another's cache sets). flags: components
 * included (1 electrons, 2 positrons, 4 ions, 8 photons, 16 Coulomb), 32 relativistic sound speed,
 * 64 breakdown. species > 0: a nuclide mixture for the Coulomb term, z53 the species' Z^{5/3}
 * (species f64) and y the abundances Y_j = X_j/A_j (n × species f64, row-major), as coulomb.ts.
 */
export function evaluateBatch(n: i32, stride: i32, inp: usize, out: usize, warn: usize, status: usize, flags: i32, species: i32, z53: usize, y: usize): void {
  const incE = (flags & 1) != 0, incP = (flags & 2) != 0, incI = (flags & 4) != 0, incG = (flags & 8) != 0, incC = (flags & 16) != 0;
  const relativistic = (flags & 32) != 0, breakdown = (flags & 64) != 0;
  const nn = <usize>stride << 3;
  for (let b0 = 0; b0 < n; b0 += BLOCK) {
    const b1 = min(b0 + BLOCK, n);
    // pass 1: the domain limits, each point's table cell, then its cache lines
    for (let i = b0; i < b1; i++) {
      const ii = <usize>i << 3;
      const rho = load<f64>(inp + ii);
      const T = load<f64>(inp + nn + ii);
      if (!(rho >= DENSITY_MIN && rho <= DENSITY_MAX) || !(T >= TEMPERATURE_MIN && T <= TEMPERATURE_MAX)) {
        store<u8>(status + i, 1);
        store<f64>(scratch + (<usize>((i - b0) * SLOT) << 3), -1);
        continue;
      }
      const d = (rho * load<f64>(inp + 3 * nn + ii)) / load<f64>(inp + 2 * nn + ii);
      store<u8>(status + i, <u8>(locate(d, T, i - b0) == 0 ? 0 : 2));
    }
    touchBlock(b1 - b0);
    // pass 2a: the pair references and the Coulomb term of each located point, in a short loop whose
    // iterations the processor overlaps (their long chains of exp/log calls are independent)
    for (let i = b0; i < b1; i++) {
      if (load<u8>(status + i) != 0) continue;
      const ii = <usize>i << 3;
      const rho = load<f64>(inp + ii);
      const T = load<f64>(inp + nn + ii);
      const abar = load<f64>(inp + 2 * nn + ii);
      const zbar = load<f64>(inp + 3 * nn + ii);
      const iAbar = 1 / abar, iT = 1 / T;
      const slot = scratch + (<usize>((i - b0) * SLOT) << 3);
      const pp = parts + (<usize>((i - b0) * PART) << 3);
      const tapered = kernelPairParts(T, load<f64>(slot, 32), load<f64>(slot, 40));
      store<f64>(pp, kp0); store<f64>(pp, kp1, 8); store<f64>(pp, kp2, 16); store<f64>(pp, kp3, 24); store<f64>(pp, kp4, 32);
      store<f64>(pp, kp5, 40); store<f64>(pp, kp6, 48); store<f64>(pp, kp7, 56); store<f64>(pp, kp9, 64); store<f64>(pp, kp10, 72);
      store<f64>(pp, kp11, 80); store<f64>(pp, tapered ? 1 : 0, 88);
      let U: f64 = 0, Cc: f64 = 0, Sc: f64 = 0, zExp: f64, G: f64;
      // ln(ρ Ye) from the cell lookup: cube roots as exp(ln/3) (a cube root cost ~4 exps here)
      const lnRhoYe = load<f64>(slot, 32);
      if (species == 0) {
        // Γ = Zbar^{5/3} Γ_e = (e²/kT)(4π/3 N_A ρ Ye Zbar⁵)^{1/3}; ln Zbar kept while Zbar repeats
        if (zbar != lnZbarOf) { lnZbarOf = zbar; lnZbar = Math.log(zbar); }
        G = E2_OVER_K * iT * Math.exp((lnRhoYe + LN_FOUR_PI_OVER_3_NA + 5 * lnZbar) * (1.0 / 3));
        ocpLiquid(G);
        const Y = iAbar;
        U = Y * ocpU; Cc = Y * ocpC; Sc = Y * ocpS;
        zExp = 2;
      } else {
        const ge = (E2_OVER_K * iT) * Math.exp((lnRhoYe + LN_FOUR_PI_OVER_3_NA) * (1.0 / 3));
        const base = y + ((<usize>i * <usize>species) << 3);
        let z53avg: f64 = 0;
        for (let j = 0; j < species; j++) {
          const Y = load<f64>(base + (<usize>j << 3));
          const z = load<f64>(z53 + (<usize>j << 3));
          if (Y == 0 || z == 0) continue;
          ocpLiquid(z * ge);
          U += Y * ocpU; Cc += Y * ocpC; Sc += Y * ocpS;
          z53avg += Y * z;
        }
        zExp = 1.0 / 3;
        G = z53avg * abar * ge;
      }
      store<f64>(pp, U, 96); store<f64>(pp, Cc, 104); store<f64>(pp, Sc, 112); store<f64>(pp, G, 120); store<f64>(pp, zExp, 128);
    }
    // pass 2: the state at each located point
    for (let i = b0; i < b1; i++) {
      if (load<u8>(status + i) != 0) continue;
      const ii = <usize>i << 3;
      const rho = load<f64>(inp + ii);
      const T = load<f64>(inp + nn + ii);
      const abar = load<f64>(inp + 2 * nn + ii);
      const zbar = load<f64>(inp + 3 * nn + ii);
      const zmax = load<f64>(inp + 4 * nn + ii);
      // reciprocals once (division is the slow operation; results may differ from the JavaScript path in the last bit)
      const iRho = 1 / rho, iAbar = 1 / abar, iT = 1 / T;
      const ye = zbar * iAbar;
      tablePairGas((rho * zbar) / abar, T, i - b0);
      const dDdAbar = -(rho * ye) * iAbar;
      const dDdZbar = rho * iAbar;
      const tP = pP, tPr = ye * pPD, tPT = pPT, tPA = pPD * dDdAbar, tPZ = pPD * dDdZbar;
      const te = pU * iRho;
      const tEr = (ye * pUD - te) * iRho, tET = pUT * iRho, tEA = (pUD * dDdAbar) * iRho, tEZ = (pUD * dDdZbar) * iRho;
      const ts = pS * iRho;
      const tSr = (ye * pSD - ts) * iRho, tST = pST * iRho;
      const xP = qP, xPr = ye * qPD, xPT = qPT, xPA = qPD * dDdAbar, xPZ = qPD * dDdZbar;
      const xe = qU * iRho;
      const xEr = (ye * qUD - xe) * iRho, xET = qUT * iRho, xEA = (qUD * dDdAbar) * iRho, xEZ = (qUD * dDdZbar) * iRho;
      const xs = qS * iRho;
      const xSr = (ye * qSD - xs) * iRho, xST = qST * iRho;
      const lP = tP - xP, lPr = tPr - xPr, lPT = tPT - xPT, lPA = tPA - xPA, lPZ = tPZ - xPZ;
      const le = te - xe, lEr = tEr - xEr, lET = tET - xET, lEA = tEA - xEA, lEZ = tEZ - xEZ;
      const ls = ts - xs, lSr = tSr - xSr, lST = tST - xST;
      const c = R_ION * iAbar;
      const ionP = rho * c * T, ionPr = c * T, ionPT = rho * c, ionPA = -ionP * iAbar;
      const ionE = 1.5 * c * T, ionET = 1.5 * c, ionEA = -ionE * iAbar;
      const lnRatio = 1.5 * Math.log(abar * T) + LN_ION_QC - Math.log((rho * AVOGADRO) * iAbar);
      const ionS = c * (lnRatio + 2.5), ionSr = -c * iRho, ionST = (1.5 * c) * iT;
      const aT3 = RADIATION_A * T * T * T;
      const aT4 = aT3 * T;
      const phP = aT4 / 3, phPT = (4 * aT3) / 3, phE = aT4 * iRho, phEr = -aT4 / (rho * rho), phET = (4 * aT3) * iRho;
      const phS = (4 * aT3) / (3 * rho), phSr = -phS * iRho, phST = (4 * RADIATION_A * T * T) * iRho;
      // Coulomb (coulomb.ts coulombCorrection): one species of charge Zbar, or the linear mixing rule
      const pp = parts + (<usize>((i - b0) * PART) << 3);
      const U = load<f64>(pp, 96), Cc = load<f64>(pp, 104), Sc = load<f64>(pp, 112), G = load<f64>(pp, 120), zExp = load<f64>(pp, 128);
      const RT = R_ION * T;
      const U1 = U - Cc;
      const third: f64 = 1.0 / 3;
      const i3rho = third * iRho;
      const kP = rho * RT * U * third;
      const kPr = RT * (4 * U - Cc) * (third * third);
      const kPT = rho * R_ION * Cc * third;
      const kE = RT * U;
      const kEr = RT * U1 * i3rho;
      const kET = R_ION * Cc;
      const kS = R_ION * Sc;
      const kSr = -R_ION * Cc * i3rho;
      const kST = (R_ION * Cc) * iT;
      const dUdA = -(U + U1 * third) * iAbar;
      const dUdZ = (zExp * U1) / zbar;
      const kPA = rho * RT * dUdA * third;
      const kPZ = rho * RT * dUdZ * third;
      const kEA = RT * dUdA;
      const kEZ = RT * dUdZ;
      let P: f64 = 0, Pr: f64 = 0, PT: f64 = 0, PA: f64 = 0, PZ: f64 = 0, e: f64 = 0, Er: f64 = 0, ET: f64 = 0, EA: f64 = 0, EZ: f64 = 0, s: f64 = 0, Sr: f64 = 0, ST: f64 = 0;
      if (incE) { P += lP; Pr += lPr; PT += lPT; PA += lPA; PZ += lPZ; e += le; Er += lEr; ET += lET; EA += lEA; EZ += lEZ; s += ls; Sr += lSr; ST += lST; }
      if (incP) { P += xP; Pr += xPr; PT += xPT; PA += xPA; PZ += xPZ; e += xe; Er += xEr; ET += xET; EA += xEA; EZ += xEZ; s += xs; Sr += xSr; ST += xST; }
      if (incI) { P += ionP; Pr += ionPr; PT += ionPT; PA += ionPA; e += ionE; ET += ionET; EA += ionEA; s += ionS; Sr += ionSr; ST += ionST; }
      if (incG) { P += phP; PT += phPT; e += phE; Er += phEr; ET += phET; s += phS; Sr += phSr; ST += phST; }
      if (incC) {
        P += kP; Pr += kPr; PT += kPT; PA += kPA; PZ += kPZ;
        e += kE; Er += kEr; ET += kET; EA += kEA; EZ += kEZ;
        s += kS; Sr += kSr; ST += kST;
      }
      put(out, stride, 0, i, P); put(out, stride, 1, i, e); put(out, stride, 2, i, s); put(out, stride, 3, i, Pr); put(out, stride, 4, i, PT);
      put(out, stride, 5, i, Er); put(out, stride, 6, i, ET); put(out, stride, 7, i, Sr); put(out, stride, 8, i, ST);
      put(out, stride, 9, i, PA); put(out, stride, 10, i, PZ); put(out, stride, 11, i, EA); put(out, stride, 12, i, EZ);
      const cv = ET;
      const g3m1 = PT / (rho * cv);
      const g1P = rho * Pr + (T * PT * PT) / (rho * cv);
      const g1 = g1P / P;
      put(out, stride, 13, i, cv);
      put(out, stride, 14, i, (cv * g1P) / (rho * Pr));
      put(out, stride, 15, i, g1);
      put(out, stride, 16, i, 1 + g3m1);
      put(out, stride, 17, i, (rho * Pr) / P);
      put(out, stride, 18, i, (T * PT) / P);
      put(out, stride, 19, i, g3m1 / g1);
      let cs2 = g1P * iRho;
      if (relativistic) cs2 = cs2 / (1 + (e + P * iRho) / C2);
      put(out, stride, 20, i, cs2 > 0 ? Math.sqrt(cs2) : 0);
      put(out, stride, 21, i, pEta);
      put(out, stride, 22, i, pNe);
      put(out, stride, 23, i, pNp);
      put(out, stride, 24, i, G);
      put(out, stride, 25, i, incG ? phP / P : 0);
      if (breakdown) {
        let b = 26;
        if (incE) { put(out, stride, b, i, lP); put(out, stride, b + 1, i, le); put(out, stride, b + 2, i, ls); put(out, stride, b + 3, i, lPr); put(out, stride, b + 4, i, lPT); put(out, stride, b + 5, i, lEr); put(out, stride, b + 6, i, lET); put(out, stride, b + 7, i, lSr); put(out, stride, b + 8, i, lST); }
        else for (let k = 0; k < 9; k++) put(out, stride, b + k, i, 0);
        b = 35;
        if (incP) { put(out, stride, b, i, xP); put(out, stride, b + 1, i, xe); put(out, stride, b + 2, i, xs); put(out, stride, b + 3, i, xPr); put(out, stride, b + 4, i, xPT); put(out, stride, b + 5, i, xEr); put(out, stride, b + 6, i, xET); put(out, stride, b + 7, i, xSr); put(out, stride, b + 8, i, xST); }
        else for (let k = 0; k < 9; k++) put(out, stride, b + k, i, 0);
        b = 44;
        if (incI) { put(out, stride, b, i, ionP); put(out, stride, b + 1, i, ionE); put(out, stride, b + 2, i, ionS); put(out, stride, b + 3, i, ionPr); put(out, stride, b + 4, i, ionPT); put(out, stride, b + 5, i, 0); put(out, stride, b + 6, i, ionET); put(out, stride, b + 7, i, ionSr); put(out, stride, b + 8, i, ionST); }
        else for (let k = 0; k < 9; k++) put(out, stride, b + k, i, 0);
        b = 53;
        if (incG) { put(out, stride, b, i, phP); put(out, stride, b + 1, i, phE); put(out, stride, b + 2, i, phS); put(out, stride, b + 3, i, 0); put(out, stride, b + 4, i, phPT); put(out, stride, b + 5, i, phEr); put(out, stride, b + 6, i, phET); put(out, stride, b + 7, i, phSr); put(out, stride, b + 8, i, phST); }
        else for (let k = 0; k < 9; k++) put(out, stride, b + k, i, 0);
        b = 62;
        if (incC) { put(out, stride, b, i, kP); put(out, stride, b + 1, i, kE); put(out, stride, b + 2, i, kS); put(out, stride, b + 3, i, kPr); put(out, stride, b + 4, i, kPT); put(out, stride, b + 5, i, kEr); put(out, stride, b + 6, i, kET); put(out, stride, b + 7, i, kSr); put(out, stride, b + 8, i, kST); }
        else for (let k = 0; k < 9; k++) put(out, stride, b + k, i, 0);
      }
      // warnings
      let w: i32 = 0;
      // state.ts partialIonizationLikely, NEUTRON_DRIP_DENSITY, GAMMA_MELT and the stability tests
      if (BOLTZMANN_K * T < (zmax * zmax * RYDBERG) / SAHA_FACTOR) {
        // ion-sphere radius > a₀/Zmax, compared as cubes
        const a0z = BOHR_RADIUS / zmax;
        if ((3 * abar) / (4 * Math.PI * rho * AVOGADRO) > a0z * a0z * a0z) w |= 1;
      }
      if (rho > NEUTRON_DRIP_DENSITY) w |= 2;
      if (G > GAMMA_MELT) w |= 4;
      if (!(P > 0)) w |= 8;
      const cs2w = Pr + (T * PT * PT) / (rho * rho * ET);
      if (!(Pr > 0) || !(cs2w > 0)) w |= 16;
      if (incI && lnRatio <= 0) w |= 32;
      store<u8>(warn + i, <u8>w);
    }
  }
}
