/**
 * The pieces of invert.ts's searches: the search bracket (the domain, or the table's grid at a point's
 * Ye), what a probe reads of an evaluation (P, e or s and its slope at fixed ρ or T, along an
 * isentrope, or the 2-D Newton step of (P, s) → (ρ, T)), and the isotherm scan run with the per-point
 * kernel. Each probe works from the per-point kernel (`at`) and, where the table method batches the
 * points (invert-batches.ts), from a PointValues record of the WebAssembly loop's answer.
 */
import { DENSITY_MAX, DENSITY_MIN, STATUS, TEMPERATURE_MAX, TEMPERATURE_MIN, type MixtureData, type PointKernel } from './state.js';
import { RADIATION_A } from './constants.js';
import type { TableGrid } from './free-energy-table.js';
import { EPS, Mode, NOT_MONOTONE_NO_SOLUTION, PROBE_OK, PROBE_TOO_HIGH, PROBE_TOO_LOW, Probe, SEARCH_PROBE, type Solver1D } from './invert-search.js';
import { SCAN_EVALUATE, type IsothermSample, type IsothermScan } from './isotherm-scan.js';

const LN_T_MIN = Math.log(TEMPERATURE_MIN);
const LN_T_MAX = Math.log(TEMPERATURE_MAX);
const LN_RHO_MIN = Math.log(DENSITY_MIN);
const LN_RHO_MAX = Math.log(DENSITY_MAX);
/**
 * The search bracket: the whole domain, or, for method "table", the part of it the table's grid
 * covers at the point's Ye (set per point by `invert`; evaluations are synchronous, so one module-level
 * object suffices). The edges are the exact values a probe at the bracket's ends evaluates.
 */
export const bounds = {
  tMin: TEMPERATURE_MIN, tMax: TEMPERATURE_MAX, rhoMin: DENSITY_MIN, rhoMax: DENSITY_MAX,
  lnTMin: LN_T_MIN, lnTMax: LN_T_MAX, lnRhoMin: LN_RHO_MIN, lnRhoMax: LN_RHO_MAX,
};
export function setBounds(tMin: number, tMax: number, rhoMin: number, rhoMax: number): void {
  bounds.tMin = tMin; bounds.tMax = tMax; bounds.rhoMin = rhoMin; bounds.rhoMax = rhoMax;
  bounds.lnTMin = Math.log(tMin); bounds.lnTMax = Math.log(tMax); bounds.lnRhoMin = Math.log(rhoMin); bounds.lnRhoMax = Math.log(rhoMax);
}
/** The table's grid at electron fraction ye, within the domain (1e-12 inside its edges, so edge probes stay in the table). */
export function setTableBounds(g: TableGrid, ye: number): void {
  const inside = 1e-12;
  setBounds(
    Math.max(TEMPERATURE_MIN, 10 ** g.logTemperatureMin * (1 + inside)), Math.min(TEMPERATURE_MAX, 10 ** g.logTemperatureMax * (1 - inside)),
    Math.max(DENSITY_MIN, (10 ** g.logDensityYeMin / ye) * (1 + inside)), Math.min(DENSITY_MAX, (10 ** g.logDensityYeMax / ye) * (1 - inside)),
  );
}
/** The temperature a search at ln T = y evaluates: the bracket's own edge values at and beyond its ends. */
export function temperatureAt(y: number): number {
  return y >= bounds.lnTMax ? bounds.tMax : y <= bounds.lnTMin ? bounds.tMin : Math.exp(y);
}
/** The density a search at ln ρ = y evaluates (as temperatureAt). */
export function densityAt(y: number): number {
  return y >= bounds.lnRhoMax ? bounds.rhoMax : y <= bounds.lnRhoMin ? bounds.rhoMin : Math.exp(y);
}
/** The bracket into slot j of a Float64Array (8 values a slot), and back without recomputing its logarithms. */
export function saveBounds(into: Float64Array, j: number): void {
  const o = 8 * j;
  into[o] = bounds.tMin; into[o + 1] = bounds.tMax; into[o + 2] = bounds.rhoMin; into[o + 3] = bounds.rhoMax;
  into[o + 4] = bounds.lnTMin; into[o + 5] = bounds.lnTMax; into[o + 6] = bounds.lnRhoMin; into[o + 7] = bounds.lnRhoMax;
}
export function restoreBounds(from: Float64Array, j: number): void {
  const o = 8 * j;
  bounds.tMin = from[o]; bounds.tMax = from[o + 1]; bounds.rhoMin = from[o + 2]; bounds.rhoMax = from[o + 3];
  bounds.lnTMin = from[o + 4]; bounds.lnTMax = from[o + 5]; bounds.lnRhoMin = from[o + 6]; bounds.lnRhoMax = from[o + 7];
}
/** Method "table" without an accuracy report: the edge tolerance is the accuracy goal (PHYSICS.md §7). */
export const TABLE_EDGE_FLOOR_DEFAULT = 1e-6;

/** Which quantity a probe reads, and how the iteration transforms it. */
export const enum Qty { P, E, S }

/** Sum of |component value| of a quantity in the kernel (rounding-floor scale). */
export function magnitude(k: PointKernel, q: Qty): number {
  const inc = k.include;
  if (q === Qty.P) {
    return (inc.electrons ? Math.abs(k.electrons.P) : 0) + (inc.positrons ? Math.abs(k.positrons.P) : 0) +
      (inc.ions ? Math.abs(k.ions.P) : 0) + (inc.photons ? Math.abs(k.photons.P) : 0) + (inc.coulomb ? Math.abs(k.coulomb.P) : 0);
  }
  if (q === Qty.E) {
    return (inc.electrons ? Math.abs(k.electrons.e) : 0) + (inc.positrons ? Math.abs(k.positrons.e) : 0) +
      (inc.ions ? Math.abs(k.ions.e) : 0) + (inc.photons ? Math.abs(k.photons.e) : 0) + (inc.coulomb ? Math.abs(k.coulomb.e) : 0);
  }
  return (inc.electrons ? Math.abs(k.electrons.s) : 0) + (inc.positrons ? Math.abs(k.positrons.s) : 0) +
    (inc.ions ? Math.abs(k.ions.s) : 0) + (inc.photons ? Math.abs(k.photons.s) : 0) + (inc.coulomb ? Math.abs(k.coulomb.s) : 0);
}

/** Point context shared by the probes. */
export class PointContext {
  rho = NaN;
  T = NaN;
  abar = NaN;
  zbar = NaN;
  row = 0;
  constructor(readonly kernel: PointKernel, readonly mixture: MixtureData | null) {}
  compute(rho: number, T: number): number {
    this.rho = rho;
    this.T = T;
    return this.kernel.compute(rho, T, this.abar, this.zbar, this.mixture, this.row);
  }
}

/** f(ln T) = P, e or s at fixed ρ. */
export class TemperatureProbe extends Probe {
  rho = NaN;
  q: Qty = Qty.E;
  constructor(private ctx: PointContext) { super(); }
  at(y: number): number {
    const T = temperatureAt(y);
    const st = this.ctx.compute(this.rho, T);
    if (st !== STATUS.OK) return st;
    const t = this.ctx.kernel.total;
    if (this.q === Qty.P) { this.f = t.P; this.fy = T * t.dPdT; }
    else if (this.q === Qty.E) { this.f = t.e; this.fy = T * t.dEdT; }
    else { this.f = t.s; this.fy = T * t.dSdT; }
    this.scale = magnitude(this.ctx.kernel, this.q);
    return PROBE_OK;
  }
  guess(fLo: number, fyLo: number, target: number): number {
    const df = target - fLo;
    const tLo = bounds.tMin;
    let t: number;
    if (this.q === Qty.E) {
      // e − e_lo ≥ a(T⁴ − T_lo⁴)/ρ and ≥ c_v(T_lo)(T − T_lo) where c_v grows with T
      t = Math.min(tLo + df / (fyLo / tLo), Math.pow((this.rho * df) / RADIATION_A + tLo ** 4, 0.25));
    } else if (this.q === Qty.P) {
      t = Math.min(tLo + df / (fyLo / tLo), Math.pow((3 * df) / RADIATION_A + tLo ** 4, 0.25));
    } else {
      // s − s_lo ≈ c_v ln(T/T_lo) for constant c_v; radiation s = 4aT³/(3ρ)
      t = Math.min(tLo * Math.exp(Math.min(df / fyLo, 700)), Math.cbrt((3 * this.rho * df) / (4 * RADIATION_A) + tLo ** 3));
    }
    if (!(t > tLo)) t = tLo * 1.001;
    return Math.log(Math.min(t, bounds.tMax));
  }
}

/** f(ln ρ) = P at fixed T. */
export class DensityProbe extends Probe {
  T = NaN;
  constructor(private ctx: PointContext) { super(); }
  at(y: number): number {
    const rho = densityAt(y);
    const st = this.ctx.compute(rho, this.T);
    if (st !== STATUS.OK) return st;
    const t = this.ctx.kernel.total;
    this.f = t.P;
    this.fy = rho * t.dPdRho;
    this.scale = magnitude(this.ctx.kernel, Qty.P);
    return PROBE_OK;
  }
  guess(fLo: number, fyLo: number, target: number): number {
    // P − P_lo ≥ (∂P/∂ρ)_lo (ρ − ρ_lo) where P is convex in ρ (ideal and degenerate gases)
    let rho = bounds.rhoMin + (target - fLo) / (fyLo / bounds.rhoMin);
    if (!(rho > bounds.rhoMin)) rho = bounds.rhoMin * 1.001;
    return Math.log(Math.min(rho, bounds.rhoMax));
  }
}

/** What the (P, s) search reads of an evaluation at (ρ, T): the totals and the summed magnitudes of the terms. */
export interface PointValues {
  rho: number; T: number; P: number; s: number; dPdRho: number; dPdT: number; dSdRho: number; dSdT: number; magP: number; magS: number;
}
export function newPointValues(): PointValues {
  return { rho: NaN, T: NaN, P: NaN, s: NaN, dPdRho: NaN, dPdT: NaN, dSdRho: NaN, dSdT: NaN, magP: NaN, magS: NaN };
}
/** The per-point kernel's state at (rho, T) as PointValues. */
export function kernelValues(k: PointKernel, rho: number, T: number, v: PointValues): PointValues {
  const t = k.total;
  v.rho = rho; v.T = T; v.P = t.P; v.s = t.s; v.dPdRho = t.dPdRho; v.dPdT = t.dPdT; v.dSdRho = t.dSdRho; v.dSdT = t.dSdT;
  v.magP = magnitude(k, Qty.P);
  v.magS = magnitude(k, Qty.S);
  return v;
}

/**
 * f(ln ρ) = P along the isentrope s = s*, via an inner (ρ, s) → T solve. Resumable: `begin(y)` starts
 * the inner solve at ln ρ = y (the inner Solver1D's `y` is then the ln T to evaluate), `end` takes the
 * inner solve's status and the state at its solution; `at` runs both with the per-point kernel.
 */
export class IsentropeProbe extends Probe {
  entropy = NaN;
  /** Last point found on the isentrope (ln ρ, ln T) and its slope d ln T/d ln ρ there. */
  lastX = NaN;
  lastLnT = NaN;
  slope = NaN;
  innerNonMonotone = false;
  /** The outer coordinate being evaluated and its density. */
  y = NaN;
  rho = NaN;
  private readonly values = newPointValues();
  constructor(private ctx: PointContext | null, readonly inner: Solver1D, private tProbe: TemperatureProbe) { super(); }
  reset(): void {
    this.lastX = this.lastLnT = this.slope = NaN;
    this.innerNonMonotone = false;
  }
  at(y: number): number {
    let st = this.begin(y);
    while (st === SEARCH_PROBE) st = this.inner.next(this.tProbe, this.tProbe.at(this.inner.y));
    return this.end(st, kernelValues(this.ctx!.kernel, this.ctx!.rho, this.ctx!.T, this.values));
  }
  /** Starts the inner (ρ, s*) → T solve at ln ρ = y; returns SEARCH_PROBE or its final status. */
  begin(y: number): number {
    const rho = densityAt(y);
    this.y = y;
    this.rho = rho;
    this.tProbe.rho = rho;
    this.tProbe.q = Qty.S;
    if (Number.isFinite(this.lastLnT)) {
      // follow the isentrope from the last point found: d ln T/d ln ρ|_s = −ρ s_ρ/(T s_T)
      let warm = this.lastLnT + (Number.isFinite(this.slope) ? this.slope * (y - this.lastX) : 0);
      warm = Math.min(bounds.lnTMax, Math.max(bounds.lnTMin, warm));
      return this.inner.start(bounds.lnTMin, bounds.lnTMax, this.entropy, this.entropy > 0 ? Mode.Log : Mode.Linear, warm);
    }
    return this.inner.start(bounds.lnTMin, bounds.lnTMax, this.entropy, Mode.LowerEnd, NaN);
  }
  /** The inner solve ended with st; v: the state at its solution (read when st is OK or NOT_MONOTONE). Returns the probe's status. */
  end(st: number, v: PointValues): number {
    this.innerNonMonotone = st === STATUS.NOT_MONOTONE;
    // s decreases with ρ at fixed T: no T cold enough means ρ is too low, no T hot enough means too high
    if (st === STATUS.NO_SOLUTION_BELOW_DOMAIN) return PROBE_TOO_LOW;
    if (st === STATUS.NO_SOLUTION_ABOVE_DOMAIN) return PROBE_TOO_HIGH;
    if (st !== STATUS.OK && st !== STATUS.NOT_MONOTONE) return st === NOT_MONOTONE_NO_SOLUTION ? STATUS.NOT_CONVERGED : st;
    const rho = this.rho;
    this.lastX = this.y;
    this.lastLnT = this.inner.y;
    this.slope = -(rho * v.dSdRho) / (v.T * v.dSdT);
    this.f = v.P;
    // ρ (∂P/∂ρ)_s = ρ [∂P/∂ρ|_T − ∂P/∂T|_ρ (∂s/∂ρ|_T)/(∂s/∂T|_ρ)]  (= Γ1 P)
    this.fy = rho * (v.dPdRho - (v.dPdT * v.dSdRho) / v.dSdT);
    this.scale = v.magP;
    return PROBE_OK;
  }
  guess(): number {
    return 0;
  }
}

/** The isotherm scan of one point with the per-point kernel (ctx holds the point's composition). */
export function scanIsotherm(scan: IsothermScan, ctx: PointContext, T: number, target: number, zmax: number): void {
  let r = scan.start(T, target, zmax, ctx.abar, ctx.zbar, bounds.lnRhoMin, bounds.lnRhoMax);
  const k = ctx.kernel;
  while (r === SCAN_EVALUATE) {
    const st = ctx.compute(scan.density(), T);
    SAMPLE.rho = ctx.rho; SAMPLE.P = k.total.P; SAMPLE.dPdRho = k.total.dPdRho; SAMPLE.eta = k.pair.eta; SAMPLE.coulombP = k.coulomb.P;
    r = scan.next(st, SAMPLE);
  }
}
const SAMPLE: IsothermSample = { rho: NaN, P: NaN, dPdRho: NaN, eta: NaN, coulombP: NaN };

export const NEWTON_FALLBACK = -100;

/** Newton2D `start`/`next`: evaluate at (ρ, T) = (exp(xn), exp(yn)) next. */
export const NEWTON_EVALUATE = -101;

/**
 * Two-dimensional Newton iteration for (P, s) → (ln ρ, ln T) on the residuals (ln P − ln P*,
 * s − s*), with the Jacobian (χ_ρ, χ_T; ρ∂s/∂ρ, T∂s/∂T) from the analytic derivatives (its
 * determinant is c_v Γ1/T·(T/P)·..., positive where matter is stable), steps capped at a factor e²
 * and a backtracking line search on the scaled residual norm. Ends with STATUS.OK with the last
 * evaluation at the solution, a failure status, or NEWTON_FALLBACK with the best point in x, y.
 * Resumable: `start` takes the state at (x0, y0), each `next` the evaluation at (xn, yn); `solve`
 * runs them with the per-point kernel.
 */
export class Newton2D {
  iterations = 0;
  x = NaN;
  y = NaN;
  /** The trial point to evaluate next (ln ρ, ln T). */
  xn = NaN;
  yn = NaN;
  private it = 0;
  private lnPT = NaN;
  private sT = NaN;
  private stepTol = 0;
  private dx = 0;
  private dy = 0;
  private merit0 = 0;
  private magS = 0;
  private small = false;
  private lambda = 1;
  private ls = 0;
  private readonly values = newPointValues();
  constructor(private maxEval: number) {}

  solve(ctx: PointContext, pT: number, sT: number, x0: number, y0: number, tol: number): number {
    let r = this.start(pT, sT, x0, y0, tol, kernelValues(ctx.kernel, ctx.rho, ctx.T, this.values));
    while (r === NEWTON_EVALUATE) {
      const st = ctx.compute(Math.exp(this.xn), Math.exp(this.yn));
      r = this.next(st, st === STATUS.OK ? kernelValues(ctx.kernel, ctx.rho, ctx.T, this.values) : this.values);
    }
    return r;
  }

  /** Begins at (x0, y0) whose state is v; returns NEWTON_EVALUATE or the end. */
  start(pT: number, sT: number, x0: number, y0: number, tol: number, v: PointValues): number {
    this.iterations = 0;
    this.it = 0;
    this.x = x0;
    this.y = y0;
    this.stepTol = tol / 8;
    this.lnPT = Math.log(pT);
    this.sT = sT;
    return this.step(v);
  }

  /** Takes the evaluation at (xn, yn): st, and its state v when st is OK. */
  next(st: number, v: PointValues): number {
    this.iterations++;
    if (st !== STATUS.OK) return st;
    let merit = Infinity;
    if (v.P > 0) {
      const g1 = Math.log(v.P) - this.lnPT;
      const g2 = (v.s - this.sT) / this.magS;
      merit = g1 * g1 + g2 * g2;
    }
    if (this.small || merit < this.merit0) {
      // accepted: the next iteration starts here
      this.x = this.xn;
      this.y = this.yn;
      this.it++;
      return this.step(v);
    }
    this.lambda *= 0.5;
    if (++this.ls < 6) return this.trial();
    return NEWTON_FALLBACK;
  }

  /** An iteration from the current point (x, y) with state v. */
  private step(v: PointValues): number {
    if (!(this.it < 40 && this.iterations < this.maxEval)) return NEWTON_FALLBACK;
    if (!(v.P > 0)) return NEWTON_FALLBACK;
    const f1 = Math.log(v.P) - this.lnPT;
    const f2 = v.s - this.sT;
    if (Math.abs(f1) <= (4 * EPS * v.magP) / v.P && Math.abs(f2) <= 4 * EPS * v.magS) return STATUS.OK;
    const j11 = (v.rho * v.dPdRho) / v.P;
    const j12 = (v.T * v.dPdT) / v.P;
    const j21 = v.rho * v.dSdRho;
    const j22 = v.T * v.dSdT;
    const det = j11 * j22 - j12 * j21;
    if (!(det > 0)) return NEWTON_FALLBACK;
    let dx = (-f1 * j22 + f2 * j12) / det;
    let dy = (-f2 * j11 + f1 * j21) / det;
    if (Math.abs(dx) <= this.stepTol && Math.abs(dy) <= this.stepTol) return STATUS.OK;
    const m = Math.max(Math.abs(dx), Math.abs(dy));
    if (m > 2) {
      dx *= 2 / m;
      dy *= 2 / m;
    }
    this.dx = dx;
    this.dy = dy;
    this.magS = v.magS;
    this.merit0 = f1 * f1 + (f2 / v.magS) * (f2 / v.magS);
    this.small = m < 1e-6;
    this.lambda = 1;
    this.ls = 0;
    return this.trial();
  }

  private trial(): number {
    this.xn = Math.min(bounds.lnRhoMax, Math.max(bounds.lnRhoMin, this.x + this.lambda * this.dx));
    this.yn = Math.min(bounds.lnTMax, Math.max(bounds.lnTMin, this.y + this.lambda * this.dy));
    return NEWTON_EVALUATE;
  }
}

/** κ of (P, s) → (ρ, T): J = ∂(P/|P|, s/|s|)/∂(ln ρ, ln T) with |·| the summed magnitudes; κ = ‖J⁻¹‖_∞. */
export function isentropeConditionNumber(v: PointValues): number {
  const j11 = (v.rho * v.dPdRho) / v.magP, j12 = (v.T * v.dPdT) / v.magP;
  const j21 = (v.rho * v.dSdRho) / v.magS, j22 = (v.T * v.dSdT) / v.magS;
  const det = j11 * j22 - j12 * j21;
  return Math.max(Math.abs(j22) + Math.abs(j12), Math.abs(j21) + Math.abs(j11)) / Math.abs(det);
}

