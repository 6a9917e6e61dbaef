/**
 * Inversions of the equation of state (PHYSICS.md §5): given two of (ρ, T, P, e, s) and the
 * composition, find ρ and T and return the full state of state.ts. Five problems:
 *
 *   (ρ, e) → T,  (ρ, P) → T,  (ρ, s) → T,  (P, T) → ρ,  (P, s) → (ρ, T).
 *
 * Method: safeguarded Newton iteration in log variables with the analytic derivatives of the
 * forward evaluation, a bracket kept at every step, and bisection whenever a Newton step leaves the
 * bracket (the classic safeguarded Newton–bisection scheme, e.g. Press et al. 2007, "Numerical
 * Recipes", 3rd ed., §9.4). For the one-dimensional problems the Newton step is taken on
 * h(y) = ln(f(y) − f(y_min)) where y is ln T (or ln ρ) and y_min the lower edge of the domain:
 * this makes power-law, degenerate and radiation-dominated relations nearly linear in y, so the
 * iteration converges in a few steps from the upper-bound initial guesses used here, and it gives
 * an exact "below the domain" test. (P, s) → (ρ, T) is solved as nested one-dimensional problems:
 * along the isentrope s(ρ, T) = s*, ln P grows with ln ρ with slope Γ1 ≥ 4/3 where matter is
 * stable, so the outer Newton iteration on ln ρ is well conditioned; the inner one solves for T at
 * fixed ρ, warm-started along the isentrope. Once the nested solve reaches 1e-6, a 2-D Newton
 * iteration on (ln P − ln P*, s − s*) in (ln ρ, ln T) finishes with one evaluation per step.
 *
 * Convergence: a point converges when the next Newton step in ln T (or ln ρ) is below
 * tolerance/8 (default tolerance 1e-12), or when the residual is at the rounding floor of the
 * forward evaluation (4 ulp of the sum of the magnitudes of the component terms): where the given
 * quantity barely depends on the unknown (e.g. the pressure of strongly degenerate matter as a
 * function of T), the answer is then as accurate as double precision allows, and no better.
 * (ρ, ·) → T problems are monotone everywhere in the domain (c_v > 0 and ∂P/∂T|_ρ > 0 hold even with
 * the Coulomb correction). (P, T) → ρ and (P, s) → (ρ, T) are not monotone where the Coulomb
 * correction makes ∂P/∂ρ|_T ≤ 0 (cold, dilute, high-Z matter, which also carries the partial-ionization
 * warning): (P, T) → ρ scans such isotherms for a dip in P(ρ), and the status NOT_MONOTONE says the
 * returned (converged) solution is one of several when P* lies in the dip's range; for (P, s) the
 * status says the search met a decreasing isentrope near the solution.
 *
 * Method "table": the search bracket is the table's grid (ρYe and T, at each point's Ye) within the
 * domain, so edge probes never leave the table (tests/eos/table-invert.test.ts). A target within the
 * table's reported maximum error (P, e, s) of the value at a bracket edge is reached there
 * (`Solver1D.edgeFloor`): hot dilute (P, T) → ρ, where P(ρ) is flat to within that error, failed
 * for ~10–40 % of such points without it. With the table every problem runs in batches
 * (`solveInBatches`, `solveIsentropesInBatches`): the same steps as the per-point loop, with every
 * unfinished point's next (ρ, T) of a 512-point chunk evaluated in one call of the WebAssembly loop.
 *
 * Accuracy (tests/eos/invert.test.ts, 10 000 states per problem over the whole domain): round
 * trips ≤ 2.5e-13 where the problem is well conditioned, within the rounding floor elsewhere.
 */
import {
  DENSITY_MAX, DENSITY_MIN, STATUS, TEMPERATURE_MAX, TEMPERATURE_MIN, PointKernel, allocateResult, densityStatus,
  densityMessage, checkMethod, temperatureStatus, temperatureMessage, compositionStatus, failPoint, includeFlags, mixtureOf, prepareComposition,
  storePoint, COMPONENT_NAMES, type EvaluateOptions, type EvaluateResult, type MixtureData,
} from './state.js';
import { toFloat64Column, type Column, type CompositionInput, type ResolvedComposition } from './composition.js';
import { RADIATION_A } from './constants.js';
import type { TableGrid } from './free-energy-table.js';
import { EPS, MAX_LOG_STEP, Mode, NOT_MONOTONE_NO_SOLUTION, PROBE_OK, PROBE_TOO_HIGH, PROBE_TOO_LOW, Probe, SEARCH_PROBE, Solver1D } from './invert-search.js';
import { COLUMN, COMPONENT, TABLE_PROBE_CHUNK, TableProbeBatch } from './table-probe.js';
import { IsothermScan, SCAN_EVALUATE, type IsothermSample } from './isotherm-scan.js';
export { COULOMB_INSTABILITY_T_MAX, coulombInstabilityTMax } from './isotherm-scan.js';

export type InverseProblem =
  | 'density-energy'
  | 'density-pressure'
  | 'density-entropy'
  | 'pressure-temperature'
  | 'pressure-entropy';

export type InvertInput = CompositionInput & {
  density?: Column;
  temperature?: Column;
  pressure?: Column;
  specificEnergy?: Column;
  specificEntropy?: Column;
};

export interface InvertOptions extends EvaluateOptions {
  /** Relative tolerance on the solved variables (default 1e-12). */
  tolerance?: number;
  /** Maximum forward evaluations per point (default 200). */
  maxEvaluations?: number;
}

export interface InvertResult extends EvaluateResult {
  problem: InverseProblem;
  /** Forward evaluations used per point (inner iterations included). */
  iterations: Uint16Array;
  /** 1 where the iteration met the tolerance (status OK or NOT_MONOTONE), else 0. */
  converged: Uint8Array;
  /**
   * Condition number at the solution: the relative change of the solved variable(s) per relative
   * change of the given quantities, measured against the sum of the magnitudes of the component
   * terms (so it also bounds the effect of rounding). The solved variables are accurate to about
   * max(tolerance, 4·2.2e-16·conditionNumber); above ~1e4 the given quantities barely determine them.
   */
  conditionNumber: Float64Array;
}

const PROBLEMS: ReadonlyArray<readonly [InverseProblem, string, string]> = [
  ['density-energy', 'density', 'specificEnergy'],
  ['density-pressure', 'density', 'pressure'],
  ['density-entropy', 'density', 'specificEntropy'],
  ['pressure-temperature', 'pressure', 'temperature'],
  ['pressure-entropy', 'pressure', 'specificEntropy'],
];
const GIVEN_KEYS = ['density', 'temperature', 'pressure', 'specificEnergy', 'specificEntropy'] as const;

/** Which inverse problem an input poses (from the two state variables it gives). */
export function inverseProblemOf(input: InvertInput): InverseProblem {
  const given = GIVEN_KEYS.filter((k) => (input as unknown as Record<string, unknown>)[k] !== undefined);
  for (const [name, a, b] of PROBLEMS) {
    if (given.length === 2 && given.includes(a as (typeof GIVEN_KEYS)[number]) && given.includes(b as (typeof GIVEN_KEYS)[number])) return name;
  }
  throw new Error(
    `invert needs exactly two of density, temperature, pressure, specificEnergy, specificEntropy forming one of: ${PROBLEMS.map(([, a, b]) => `(${a}, ${b})`).join(', ')}; got (${given.join(', ')})`,
  );
}

const LN_T_MIN = Math.log(TEMPERATURE_MIN);
const LN_T_MAX = Math.log(TEMPERATURE_MAX);
const LN_RHO_MIN = Math.log(DENSITY_MIN);
const LN_RHO_MAX = Math.log(DENSITY_MAX);
/**
 * The search bracket: the whole domain, or, for method "table", the part of it the table's grid
 * covers at the point's Ye (set per point by `invert`; evaluations are synchronous, so one module-level
 * object suffices). The edges are the exact values a probe at the bracket's ends evaluates.
 */
const bounds = {
  tMin: TEMPERATURE_MIN, tMax: TEMPERATURE_MAX, rhoMin: DENSITY_MIN, rhoMax: DENSITY_MAX,
  lnTMin: LN_T_MIN, lnTMax: LN_T_MAX, lnRhoMin: LN_RHO_MIN, lnRhoMax: LN_RHO_MAX,
};
function setBounds(tMin: number, tMax: number, rhoMin: number, rhoMax: number): void {
  bounds.tMin = tMin; bounds.tMax = tMax; bounds.rhoMin = rhoMin; bounds.rhoMax = rhoMax;
  bounds.lnTMin = Math.log(tMin); bounds.lnTMax = Math.log(tMax); bounds.lnRhoMin = Math.log(rhoMin); bounds.lnRhoMax = Math.log(rhoMax);
}
/** The table's grid at electron fraction ye, within the domain (1e-12 inside its edges, so edge probes stay in the table). */
function setTableBounds(g: TableGrid, ye: number): void {
  const inside = 1e-12;
  setBounds(
    Math.max(TEMPERATURE_MIN, 10 ** g.logTemperatureMin * (1 + inside)), Math.min(TEMPERATURE_MAX, 10 ** g.logTemperatureMax * (1 - inside)),
    Math.max(DENSITY_MIN, (10 ** g.logDensityYeMin / ye) * (1 + inside)), Math.min(DENSITY_MAX, (10 ** g.logDensityYeMax / ye) * (1 - inside)),
  );
}
/** Method "table" without an accuracy report: the edge tolerance is the accuracy goal (PHYSICS.md §7). */
const TABLE_EDGE_FLOOR_DEFAULT = 1e-6;

/** Which quantity a probe reads, and how the iteration transforms it. */
const enum Qty { P, E, S }

/** Sum of |component value| of a quantity in the kernel (rounding-floor scale). */
function magnitude(k: PointKernel, q: Qty): number {
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
class PointContext {
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
class TemperatureProbe extends Probe {
  rho = NaN;
  q: Qty = Qty.E;
  constructor(private ctx: PointContext) { super(); }
  at(y: number): number {
    const T = y >= bounds.lnTMax ? bounds.tMax : y <= bounds.lnTMin ? bounds.tMin : Math.exp(y);
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
class DensityProbe extends Probe {
  T = NaN;
  constructor(private ctx: PointContext) { super(); }
  at(y: number): number {
    const rho = y >= bounds.lnRhoMax ? bounds.rhoMax : y <= bounds.lnRhoMin ? bounds.rhoMin : Math.exp(y);
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
interface PointValues {
  rho: number; T: number; P: number; s: number; dPdRho: number; dPdT: number; dSdRho: number; dSdT: number; magP: number; magS: number;
}
function newPointValues(): PointValues {
  return { rho: NaN, T: NaN, P: NaN, s: NaN, dPdRho: NaN, dPdT: NaN, dSdRho: NaN, dSdT: NaN, magP: NaN, magS: NaN };
}
/** The per-point kernel's state at (rho, T) as PointValues. */
function kernelValues(k: PointKernel, rho: number, T: number, v: PointValues): PointValues {
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
class IsentropeProbe extends Probe {
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
    const rho = y >= bounds.lnRhoMax ? bounds.rhoMax : y <= bounds.lnRhoMin ? bounds.rhoMin : Math.exp(y);
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
function scanIsotherm(scan: IsothermScan, ctx: PointContext, T: number, target: number, zmax: number): void {
  let r = scan.start(T, target, zmax, ctx.abar, ctx.zbar, bounds.lnRhoMin, bounds.lnRhoMax);
  const k = ctx.kernel;
  while (r === SCAN_EVALUATE) {
    const st = ctx.compute(scan.density(), T);
    SAMPLE.rho = ctx.rho; SAMPLE.P = k.total.P; SAMPLE.dPdRho = k.total.dPdRho; SAMPLE.eta = k.pair.eta; SAMPLE.coulombP = k.coulomb.P;
    r = scan.next(st, SAMPLE);
  }
}
const SAMPLE: IsothermSample = { rho: NaN, P: NaN, dPdRho: NaN, eta: NaN, coulombP: NaN };

const NEWTON_FALLBACK = -100;

/** Newton2D `start`/`next`: evaluate at (ρ, T) = (exp(xn), exp(yn)) next. */
const NEWTON_EVALUATE = -101;

/**
 * Two-dimensional Newton iteration for (P, s) → (ln ρ, ln T) on the residuals (ln P − ln P*,
 * s − s*), with the Jacobian (χ_ρ, χ_T; ρ∂s/∂ρ, T∂s/∂T) from the analytic derivatives (its
 * determinant is c_v Γ1/T·(T/P)·..., positive where matter is stable), steps capped at a factor e²
 * and a backtracking line search on the scaled residual norm. Ends with STATUS.OK with the last
 * evaluation at the solution, a failure status, or NEWTON_FALLBACK with the best point in x, y.
 * Resumable: `start` takes the state at (x0, y0), each `next` the evaluation at (xn, yn); `solve`
 * runs them with the per-point kernel.
 */
class Newton2D {
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

const QTY_WORD: Record<number, string> = { [Qty.P]: 'pressure', [Qty.E]: 'specific energy', [Qty.S]: 'specific entropy' };
const fmt = (x: number) => (Number.isFinite(x) ? x.toPrecision(6) : String(x));

/**
 * Solve one of the five inverse problems at every point (inputs broadcast like evaluate). The
 * problem follows from the two state variables given. Output: evaluate's columns at the solution
 * (density and temperature hold the solved values), plus iterations and converged per point.
 */
export function invert(input: InvertInput, options: InvertOptions = {}): InvertResult {
  if (input === null || typeof input !== 'object') throw new Error('invert needs an input object');
  checkMethod(options);
  const problem = inverseProblemOf(input);
  const tol = options.tolerance ?? 1e-12;
  if (!(tol > 0 && tol < 1e-2)) throw new Error(`tolerance ${tol} must be in (0, 1e-2)`);
  const maxEval = options.maxEvaluations ?? 200;
  if (!(maxEval >= 4 && maxEval <= 60000)) throw new Error(`maxEvaluations ${maxEval} must be between 4 and 60000`);
  const inc = includeFlags(options.components);
  const included = COMPONENT_NAMES.filter((c) => inc[c]);
  const [, keyA, keyB] = PROBLEMS.find(([p]) => p === problem)!;
  const colA = (input as unknown as Record<string, Column>)[keyA];
  const colB = (input as unknown as Record<string, Column>)[keyB];
  const { n, comp } = prepareComposition(input, [[keyA, colA], [keyB, colB]]);
  const A = toFloat64Column(colA, n, keyA);
  const B = toFloat64Column(colB, n, keyB);
  const res = allocateResult(n, included, options.maxwellResiduals === true) as InvertResult;
  res.problem = problem;
  res.iterations = new Uint16Array(n);
  res.converged = new Uint8Array(n);
  res.conditionNumber = new Float64Array(n).fill(NaN);
  res.density.fill(NaN); // the unknowns stay NaN where no solution is found
  res.temperature.fill(NaN);
  res.abar.set(comp.abar);
  res.zbar.set(comp.zbar);
  res.ye.set(comp.ye);
  const relativistic = options.soundSpeed === 'relativistic';
  const kernel = new PointKernel(inc, options.method === 'table' ? options.table! : null);
  if (options.method === 'table') res.method = 'table';
  setBounds(TEMPERATURE_MIN, TEMPERATURE_MAX, DENSITY_MIN, DENSITY_MAX);
  const ctx = new PointContext(kernel, mixtureOf(comp));
  const outer = new Solver1D(tol, maxEval);
  const inner = new Solver1D(tol / 16, maxEval);
  if (options.method === 'table') {
    const q = options.table!.accuracy?.quantities;
    const worst = q ? Math.max(q['pressure']?.max ?? NaN, q['energy']?.max ?? NaN, q['entropy']?.max ?? NaN) : NaN;
    outer.edgeFloor = inner.edgeFloor = Number.isFinite(worst) ? worst : TABLE_EDGE_FLOOR_DEFAULT;
  }
  const tProbe = new TemperatureProbe(ctx);
  const dProbe = new DensityProbe(ctx);
  const innerTProbe = new TemperatureProbe(ctx);
  const sProbe = new IsentropeProbe(ctx, inner, innerTProbe);
  const newton = new Newton2D(maxEval);
  const scan = new IsothermScan();
  outer.maxStep = problem === 'pressure-entropy' ? 30 : MAX_LOG_STEP;
  if (kernel.table !== null) {
    const batch = new TableProbeBatch(kernel.table, inc, relativistic, ctx.mixture);
    const bp = new BatchPoints(res, problem, [keyA, keyB], A, B, comp, batch, Math.min(n, TABLE_PROBE_CHUNK));
    if (problem === 'pressure-entropy') solveIsentropesInBatches(bp, innerTProbe, outer.edgeFloor, tol, maxEval);
    else solveInBatches(bp, tProbe, dProbe, outer.edgeFloor, tol, maxEval);
    return res;
  }

  for (let i = 0; i < n; i++) {
    const a = A[i];
    const b = B[i];
    if (problem === 'pressure-temperature') res.temperature[i] = b;
    else if (problem !== 'pressure-entropy') res.density[i] = a;
    let st = pointInputStatus(problem, a, b, comp, i);
    if (st !== STATUS.OK) {
      failPoint(res, i, st, pointInputMessage(problem, a, b, comp, i));
      continue;
    }
    ctx.abar = comp.abar[i];
    ctx.zbar = comp.zbar[i];
    ctx.row = i;
    outer.iterations = 0;
    inner.iterations = 0;
    let qty = Qty.E;
    if (problem === 'pressure-temperature') {
      dProbe.T = b;
      st = outer.solve(dProbe, bounds.lnRhoMin, bounds.lnRhoMax, a, Mode.LowerEnd, NaN);
      if (st === STATUS.OK || st === STATUS.NOT_MONOTONE) {
        // P(ρ) at fixed T is not monotone where the Coulomb term wins: check this isotherm.
        const rhoStar = ctx.rho;
        scanIsotherm(scan, ctx, b, a, comp.zmax[i]);
        outer.iterations += scan.evaluations;
        if (scan.status > 0) st = scan.status;
        else {
          if (!scan.unique) st = STATUS.NOT_MONOTONE;
          else if (st === STATUS.NOT_MONOTONE && scan.monotone) st = STATUS.OK;
          if (scan.evaluations > 0) {
            const st2 = ctx.compute(rhoStar, b);
            outer.iterations++;
            if (st2 !== STATUS.OK) st = st2;
          }
        }
      }
      qty = Qty.P;
    } else if (problem === 'pressure-entropy') {
      sProbe.entropy = b;
      sProbe.reset();
      // Nested 1-D solves to 1e-6, then 2-D Newton polishes to the tolerance (one evaluation per
      // step); if that fails, the nested solve continues to the full tolerance.
      outer.tol = Math.max(tol, 1e-6);
      st = outer.solve(sProbe, bounds.lnRhoMin, bounds.lnRhoMax, a, Mode.Log, 0);
      outer.tol = tol;
      if ((st === STATUS.OK || st === STATUS.NOT_MONOTONE) && tol < 1e-6) {
        const stN = newton.solve(ctx, a, b, outer.y, inner.y, tol);
        outer.iterations += newton.iterations;
        if (stN === NEWTON_FALLBACK || stN > 0) st = outer.solve(sProbe, bounds.lnRhoMin, bounds.lnRhoMax, a, Mode.Log, outer.y);
      }
      if (st === STATUS.OK && sProbe.innerNonMonotone) st = STATUS.NOT_MONOTONE;
      qty = Qty.P;
    } else {
      tProbe.rho = a;
      tProbe.q = problem === 'density-energy' ? Qty.E : problem === 'density-pressure' ? Qty.P : Qty.S;
      qty = tProbe.q;
      st = outer.solve(tProbe, bounds.lnTMin, bounds.lnTMax, b, Mode.LowerEnd, NaN);
    }
    const evals = outer.iterations + inner.iterations;
    res.iterations[i] = Math.min(evals, 65535);
    if (st === STATUS.OK || st === STATUS.NOT_MONOTONE) {
      res.density[i] = ctx.rho;
      res.temperature[i] = ctx.T;
      storePoint(res, i, kernel, comp.zmax[i], relativistic);
      res.conditionNumber[i] = conditionNumber(kernel, problem, ctx.rho, ctx.T);
      markSolved(res, i, st, problem, keyA, keyB);
      continue;
    }
    failPoint(res, i, st === NOT_MONOTONE_NO_SOLUTION ? STATUS.NOT_MONOTONE : st, failureMessage(st, problem, a, b, qty, outer, evals));
  }
  return res;
}

/** Status, converged flag and message of a point whose search found a solution (OK or NOT_MONOTONE). */
function markSolved(res: InvertResult, i: number, st: number, problem: InverseProblem, keyA: string, keyB: string): void {
  res.converged[i] = 1;
  res.status[i] = st;
  if (st === STATUS.NOT_MONOTONE) {
    res.messages[i] = `a solution was found, but ${problem === 'pressure-entropy' ? 'P along the isentrope' : 'P(ρ) at this T'} is not monotone here (the Coulomb correction makes ∂P/∂ρ ≤ 0): other states may give the same ${keyA} and ${keyB}`;
  }
}

/**
 * Method "table": the points of an inversion in chunks of TABLE_PROBE_CHUNK, whose evaluations run in
 * one call of the WebAssembly loop per round (evaluate's table method) instead of one JavaScript
 * per-point evaluation each (~1.4 µs): what the batched drivers below share — each point's bracket
 * (the table's grid at its Ye), filling and reading the loop's points, storing a solved point's state
 * (bit for bit evaluate's answer at its (ρ, T)) or its failure.
 */
class BatchPoints {
  /** Per chunk slot: tMin, tMax, ρMin, ρMax (bounds is one module-level object: set it from these per point). */
  private readonly lo: Float64Array;
  constructor(
    readonly res: InvertResult, readonly problem: InverseProblem, private readonly keys: readonly [string, string],
    readonly A: Float64Array, readonly B: Float64Array, readonly comp: ResolvedComposition, readonly batch: TableProbeBatch, slots: number,
  ) {
    this.lo = new Float64Array(4 * slots);
    batch.bind(res);
  }

  /** Point i into slot j: false (and the point failed) when its inputs are refused; else its bracket is set. */
  prepare(i: number, j: number): boolean {
    const { res, problem, A, B, comp } = this;
    if (problem === 'pressure-temperature') res.temperature[i] = B[i];
    else if (problem !== 'pressure-entropy') res.density[i] = A[i];
    const st = pointInputStatus(problem, A[i], B[i], comp, i);
    if (st !== STATUS.OK) {
      failPoint(res, i, st, pointInputMessage(problem, A[i], B[i], comp, i));
      return false;
    }
    setTableBounds(this.batch.table.grid, comp.ye[i]);
    const lo = this.lo;
    lo[4 * j] = bounds.tMin; lo[4 * j + 1] = bounds.tMax; lo[4 * j + 2] = bounds.rhoMin; lo[4 * j + 3] = bounds.rhoMax;
    return true;
  }

  useBounds(j: number): void {
    const lo = this.lo;
    setBounds(lo[4 * j], lo[4 * j + 1], lo[4 * j + 2], lo[4 * j + 3]);
  }

  /** Loop point k: point i of the input at (ρ, T). */
  fill(k: number, i: number, rho: number, T: number): void {
    const batch = this.batch, comp = this.comp;
    batch.density[k] = rho;
    batch.temperature[k] = T;
    batch.abar[k] = comp.abar[i];
    batch.zbar[k] = comp.zbar[i];
    batch.zmax[k] = comp.zmax[i];
    batch.row[k] = i;
  }

  /** Loop point k's state as PointValues (after `batch.run`). */
  values(k: number, v: PointValues): PointValues {
    const batch = this.batch;
    v.rho = batch.density[k]; v.T = batch.temperature[k];
    v.P = batch.value(k, COLUMN.pressure); v.s = batch.value(k, COLUMN.specificEntropy);
    v.dPdRho = batch.value(k, COLUMN.dPdRho); v.dPdT = batch.value(k, COLUMN.dPdT);
    v.dSdRho = batch.value(k, COLUMN.dSdRho); v.dSdT = batch.value(k, COLUMN.dSdT);
    v.magP = batch.magnitude(k, COLUMN.pressure); v.magS = batch.magnitude(k, COLUMN.specificEntropy);
    return v;
  }

  /** Point i solved (st OK or NOT_MONOTONE) at loop point k, with condition number κ. */
  solved(i: number, k: number, st: number, evals: number, kappa: number): void {
    const res = this.res, batch = this.batch;
    res.iterations[i] = Math.min(evals, 65535);
    res.density[i] = batch.density[k];
    res.temperature[i] = batch.temperature[k];
    batch.store(i, k);
    res.conditionNumber[i] = kappa;
    markSolved(res, i, st, this.problem, this.keys[0], this.keys[1]);
  }

  /** Point i (slot j) failed with st after evals evaluations; s: its search, for the message. */
  fail(i: number, j: number, st: number, q: Qty, s: Solver1D, evals: number): void {
    this.res.iterations[i] = Math.min(evals, 65535);
    this.useBounds(j);
    failPoint(this.res, i, st === NOT_MONOTONE_NO_SOLUTION ? STATUS.NOT_MONOTONE : st, failureMessage(st, this.problem, this.A[i], this.B[i], q, s, evals));
  }
}

/**
 * (ρ, ·) → T and (P, T) → ρ in batches: the same search as the per-point loop of `invert` (Solver1D in
 * Mode.LowerEnd from the lower edge of the bracket, the probe's first guess), up to TABLE_PROBE_CHUNK
 * points side by side, each round evaluating every unfinished point's next temperature or density.
 * (P, T) → ρ then checks each isotherm as the per-point loop does (IsothermScan; only cold isotherms
 * are scanned), the chunk's scans side by side in the same way, and evaluates the scanned points'
 * solutions once more.
 */
function solveInBatches(bp: BatchPoints, tProbe: TemperatureProbe, dProbe: DensityProbe, edgeFloor: number, tol: number, maxEval: number): void {
  const { res, problem, A, B, comp, batch } = bp;
  const n = res.n;
  const forDensity = problem === 'pressure-temperature';
  const q = problem === 'density-energy' ? Qty.E : problem === 'density-entropy' ? Qty.S : Qty.P;
  const col = q === Qty.E ? COLUMN.specificEnergy : q === Qty.P ? COLUMN.pressure : COLUMN.specificEntropy;
  // the slope column: ∂/∂ρ of P for (P, T) → ρ, else ∂/∂T of the given quantity
  const colSlope = forDensity ? COLUMN.dPdRho : q === Qty.E ? COLUMN.dEdT : q === Qty.P ? COLUMN.dPdT : COLUMN.dSdT;
  const probe: Probe = forDensity ? dProbe : tProbe;
  tProbe.q = q;
  const m0 = Math.min(n, TABLE_PROBE_CHUNK);
  const searches = Array.from({ length: m0 }, () => {
    const s = new Solver1D(tol, maxEval);
    s.edgeFloor = edgeFloor;
    return s;
  });
  const active = new Int32Array(m0);
  // (P, T) → ρ: each point's isotherm scan, the search's status and solution while it runs
  const scans = forDensity ? Array.from({ length: m0 }, () => new IsothermScan()) : [];
  const scanning = new Int32Array(forDensity ? m0 : 0);
  const scanned = new Int32Array(forDensity ? m0 : 0);
  const searchStatus = new Int32Array(forDensity ? m0 : 0);
  const rhoStar = new Float64Array(forDensity ? m0 : 0);
  const sample: IsothermSample = { rho: NaN, P: NaN, dPdRho: NaN, eta: NaN, coulombP: NaN };
  const kappa = (k: number) => batch.magnitude(k, col) / Math.abs((forDensity ? batch.density[k] : batch.temperature[k]) * batch.value(k, colSlope));
  for (let from = 0; from < n; from += TABLE_PROBE_CHUNK) {
    const m = Math.min(TABLE_PROBE_CHUNK, n - from);
    let nActive = 0, nScan = 0;
    for (let j = 0; j < m; j++) {
      const i = from + j;
      if (!bp.prepare(i, j)) continue;
      searches[j].iterations = 0;
      if (forDensity) searches[j].start(bounds.lnRhoMin, bounds.lnRhoMax, A[i], Mode.LowerEnd, NaN);
      else searches[j].start(bounds.lnTMin, bounds.lnTMax, B[i], Mode.LowerEnd, NaN);
      active[nActive++] = j;
    }
    while (nActive > 0) {
      for (let k = 0; k < nActive; k++) {
        const j = active[k], i = from + j;
        const y = searches[j].y;
        bp.useBounds(j);
        if (forDensity) bp.fill(k, i, y >= bounds.lnRhoMax ? bounds.rhoMax : y <= bounds.lnRhoMin ? bounds.rhoMin : Math.exp(y), B[i]);
        else bp.fill(k, i, A[i], y >= bounds.lnTMax ? bounds.tMax : y <= bounds.lnTMin ? bounds.tMin : Math.exp(y));
      }
      batch.run(nActive);
      let kept = 0;
      for (let k = 0; k < nActive; k++) {
        const j = active[k], i = from + j, s = searches[j];
        let st = batch.status(k);
        if (st === STATUS.OK) {
          probe.f = batch.value(k, col);
          probe.fy = (forDensity ? batch.density[k] : batch.temperature[k]) * batch.value(k, colSlope);
          probe.scale = batch.magnitude(k, col);
          st = PROBE_OK;
        }
        bp.useBounds(j); // for the probe's first guess
        tProbe.rho = A[i];
        const r = s.next(probe, st);
        if (r === SEARCH_PROBE) {
          active[kept++] = j;
          continue;
        }
        if (forDensity && (r === STATUS.OK || r === STATUS.NOT_MONOTONE)) {
          // P(ρ) at fixed T is not monotone where the Coulomb term wins: check this isotherm as `invert`'s loop does
          const sc = scans[j];
          if (sc.start(B[i], A[i], comp.zmax[i], comp.abar[i], comp.zbar[i], bounds.lnRhoMin, bounds.lnRhoMax) === SCAN_EVALUATE) {
            // scanned below, then the solution evaluated again (the batch's output will have moved on)
            searchStatus[j] = r;
            rhoStar[j] = batch.density[k];
            scanning[nScan++] = j;
            continue;
          }
        }
        // no scan (or one that ended without evaluating: a monotone isotherm): this batch's output is the solution's state
        const result = forDensity && r === STATUS.NOT_MONOTONE ? STATUS.OK : r;
        if (result === STATUS.OK || result === STATUS.NOT_MONOTONE) bp.solved(i, k, result, s.iterations, kappa(k));
        else bp.fail(i, j, result, q, s, s.iterations);
      }
      nActive = kept;
    }
    // the isotherm scans of this chunk, side by side: each round evaluates every unfinished scan's next density
    let nDone = 0;
    while (nScan > 0) {
      for (let k = 0; k < nScan; k++) {
        const j = scanning[k];
        bp.fill(k, from + j, scans[j].density(), B[from + j]);
      }
      batch.run(nScan);
      let kept = 0;
      for (let k = 0; k < nScan; k++) {
        const j = scanning[k];
        const st = batch.status(k);
        if (st === STATUS.OK) {
          sample.rho = batch.density[k];
          sample.P = batch.value(k, COLUMN.pressure);
          sample.dPdRho = batch.value(k, COLUMN.dPdRho);
          sample.eta = batch.value(k, COLUMN.eta);
          sample.coulombP = batch.componentValue(k, COMPONENT.coulomb, COLUMN.pressure);
        }
        if (scans[j].next(st, sample) === SCAN_EVALUATE) scanning[kept++] = j;
        else scanned[nDone++] = j;
      }
      nScan = kept;
    }
    if (nDone > 0) {
      // the solutions of the scanned points, evaluated again (as the per-point loop does after its scan)
      for (let k = 0; k < nDone; k++) bp.fill(k, from + scanned[k], rhoStar[scanned[k]], B[from + scanned[k]]);
      batch.run(nDone);
      for (let k = 0; k < nDone; k++) {
        const j = scanned[k], i = from + j, s = searches[j], sc = scans[j];
        s.iterations += sc.evaluations;
        let result = searchStatus[j];
        if (sc.status > 0) result = sc.status;
        else {
          if (!sc.unique) result = STATUS.NOT_MONOTONE;
          else if (result === STATUS.NOT_MONOTONE && sc.monotone) result = STATUS.OK;
          s.iterations++;
          if (batch.status(k) !== STATUS.OK) result = batch.status(k);
        }
        if (result === STATUS.OK || result === STATUS.NOT_MONOTONE) bp.solved(i, k, result, s.iterations, kappa(k));
        else bp.fail(i, j, result, q, s, s.iterations);
      }
    }
  }
}

const enum Stage { FirstSearch, Newton, SecondSearch }
/** Newton fell back: the outer search runs again at the full tolerance. */
const SEARCH_AGAIN = -102;

/**
 * (P, s) → (ρ, T) in batches: the per-point loop's steps for up to TABLE_PROBE_CHUNK points side by
 * side — the outer search on ln ρ to max(tolerance, 1e-6) whose every probe is an inner (ρ, s*) → T
 * solve, the 2-D Newton polish, and the outer search again at the full tolerance where Newton falls
 * back — each round evaluating every unfinished point's next (ρ, T).
 */
function solveIsentropesInBatches(bp: BatchPoints, tProbe: TemperatureProbe, edgeFloor: number, tol: number, maxEval: number): void {
  const { res, A, B, batch } = bp;
  const n = res.n;
  const m0 = Math.min(n, TABLE_PROBE_CHUNK);
  const solver = (t: number, maxStep: number) => {
    const s = new Solver1D(t, maxEval);
    s.edgeFloor = edgeFloor;
    s.maxStep = maxStep;
    return s;
  };
  const outers = Array.from({ length: m0 }, () => solver(tol, 30));
  const probes = Array.from({ length: m0 }, () => new IsentropeProbe(null, solver(tol / 16, MAX_LOG_STEP), tProbe));
  const newtons = Array.from({ length: m0 }, () => new Newton2D(maxEval));
  const stage = new Uint8Array(m0);
  const firstStatus = new Int32Array(m0);
  const active = new Int32Array(m0);
  /** The state of the evaluation being taken (read only where it succeeded). */
  const v = newPointValues();

  /** After Newton's step: SEARCH_PROBE (it needs an evaluation), SEARCH_AGAIN, or the point's status. */
  const afterNewton = (j: number, rn: number): number => {
    if (rn === NEWTON_EVALUATE) return SEARCH_PROBE;
    outers[j].iterations += newtons[j].iterations;
    if (rn === NEWTON_FALLBACK || rn > 0) return SEARCH_AGAIN;
    return firstStatus[j]; // polished: the first search's status stands
  };
  /** The outer search from its result ro on: SEARCH_PROBE (an inner probe to evaluate) or the point's status. */
  const drive = (j: number, i: number, ro: number): number => {
    const outer = outers[j], sp = probes[j];
    for (;;) {
      while (ro === SEARCH_PROBE) {
        const ri = sp.begin(outer.y);
        if (ri === SEARCH_PROBE) return SEARCH_PROBE;
        ro = outer.next(sp, sp.end(ri, v)); // an inner solve that ended before evaluating (its budget): no state is read
      }
      if (stage[j] === Stage.SecondSearch) return ro;
      outer.tol = tol;
      if (!((ro === STATUS.OK || ro === STATUS.NOT_MONOTONE) && tol < 1e-6)) return ro;
      // polish from the search's last state (the evaluation just taken)
      firstStatus[j] = ro;
      stage[j] = Stage.Newton;
      const r = afterNewton(j, newtons[j].start(A[i], B[i], outer.y, sp.inner.y, tol, v));
      if (r !== SEARCH_AGAIN) return r;
      stage[j] = Stage.SecondSearch;
      ro = outer.start(bounds.lnRhoMin, bounds.lnRhoMax, A[i], Mode.Log, outer.y);
    }
  };
  /** Takes point j's evaluation (st; v when OK): SEARCH_PROBE or the point's status. */
  const take = (j: number, i: number, st: number): number => {
    const sp = probes[j];
    if (stage[j] === Stage.Newton) {
      const r = afterNewton(j, newtons[j].next(st, v));
      if (r !== SEARCH_AGAIN) return r;
      stage[j] = Stage.SecondSearch;
      return drive(j, i, outers[j].start(bounds.lnRhoMin, bounds.lnRhoMax, A[i], Mode.Log, outers[j].y));
    }
    // an inner probe: s at (ρ, T)
    if (st === STATUS.OK) {
      tProbe.f = v.s;
      tProbe.fy = v.T * v.dSdT;
      tProbe.scale = v.magS;
      st = PROBE_OK;
    }
    tProbe.rho = sp.rho; // for the inner search's first guess
    tProbe.q = Qty.S;
    const ri = sp.inner.next(tProbe, st);
    if (ri === SEARCH_PROBE) return SEARCH_PROBE;
    return drive(j, i, outers[j].next(sp, sp.end(ri, v)));
  };
  /** Point i (slot j) ended with r (its last evaluation is loop point k when r is a solution). */
  const finish = (j: number, i: number, r: number, k: number) => {
    const outer = outers[j], sp = probes[j];
    const evals = outer.iterations + sp.inner.iterations;
    const st = r === STATUS.OK && sp.innerNonMonotone ? STATUS.NOT_MONOTONE : r;
    if (st === STATUS.OK || st === STATUS.NOT_MONOTONE) bp.solved(i, k, st, evals, isentropeConditionNumber(v));
    else bp.fail(i, j, st, Qty.P, outer, evals);
  };

  for (let from = 0; from < n; from += TABLE_PROBE_CHUNK) {
    const m = Math.min(TABLE_PROBE_CHUNK, n - from);
    let nActive = 0;
    for (let j = 0; j < m; j++) {
      const i = from + j;
      if (!bp.prepare(i, j)) continue;
      const outer = outers[j], sp = probes[j];
      sp.entropy = B[i];
      sp.reset();
      outer.iterations = 0;
      sp.inner.iterations = 0;
      // nested 1-D solves to 1e-6 first (then Newton), as the per-point loop
      outer.tol = Math.max(tol, 1e-6);
      stage[j] = Stage.FirstSearch;
      const r = drive(j, i, outer.start(bounds.lnRhoMin, bounds.lnRhoMax, A[i], Mode.Log, 0));
      if (r === SEARCH_PROBE) active[nActive++] = j;
      else finish(j, i, r, -1); // failed before any evaluation
    }
    while (nActive > 0) {
      for (let k = 0; k < nActive; k++) {
        const j = active[k], i = from + j;
        bp.useBounds(j);
        if (stage[j] === Stage.Newton) bp.fill(k, i, Math.exp(newtons[j].xn), Math.exp(newtons[j].yn));
        else {
          const y = probes[j].inner.y;
          bp.fill(k, i, probes[j].rho, y >= bounds.lnTMax ? bounds.tMax : y <= bounds.lnTMin ? bounds.tMin : Math.exp(y));
        }
      }
      batch.run(nActive);
      let kept = 0;
      for (let k = 0; k < nActive; k++) {
        const j = active[k], i = from + j;
        const st = batch.status(k);
        if (st === STATUS.OK) bp.values(k, v);
        bp.useBounds(j);
        const r = take(j, i, st);
        if (r === SEARCH_PROBE) active[kept++] = j;
        else finish(j, i, r, k);
      }
      nActive = kept;
    }
  }
}

function conditionNumber(k: PointKernel, problem: InverseProblem, rho: number, T: number): number {
  const t = k.total;
  switch (problem) {
    case 'density-energy':
      return magnitude(k, Qty.E) / Math.abs(T * t.dEdT);
    case 'density-pressure':
      return magnitude(k, Qty.P) / Math.abs(T * t.dPdT);
    case 'density-entropy':
      return magnitude(k, Qty.S) / Math.abs(T * t.dSdT);
    case 'pressure-temperature':
      return magnitude(k, Qty.P) / Math.abs(rho * t.dPdRho);
    default:
      return isentropeConditionNumber(kernelValues(k, rho, T, CONDITION_VALUES));
  }
}

/** κ of (P, s) → (ρ, T): J = ∂(P/|P|, s/|s|)/∂(ln ρ, ln T) with |·| the summed magnitudes; κ = ‖J⁻¹‖_∞. */
function isentropeConditionNumber(v: PointValues): number {
  const j11 = (v.rho * v.dPdRho) / v.magP, j12 = (v.T * v.dPdT) / v.magP;
  const j21 = (v.rho * v.dSdRho) / v.magS, j22 = (v.T * v.dSdT) / v.magS;
  const det = j11 * j22 - j12 * j21;
  return Math.max(Math.abs(j22) + Math.abs(j12), Math.abs(j21) + Math.abs(j11)) / Math.abs(det);
}
const CONDITION_VALUES = newPointValues();

/** Status of one point's inputs (no allocation). */
function pointInputStatus(problem: InverseProblem, a: number, b: number, comp: ResolvedComposition, i: number): number {
  if (problem === 'pressure-temperature') {
    const st = temperatureStatus(b);
    if (st !== STATUS.OK) return st;
    if (!(Number.isFinite(a) && a > 0)) return STATUS.TARGET_INVALID;
  } else if (problem === 'pressure-entropy') {
    if (!(Number.isFinite(a) && a > 0) || !Number.isFinite(b)) return STATUS.TARGET_INVALID;
  } else {
    const st = densityStatus(a);
    if (st !== STATUS.OK) return st;
    if (!Number.isFinite(b)) return STATUS.TARGET_INVALID;
  }
  return compositionStatus(comp, i);
}

/** What is wrong with one point's inputs (called only for failed points). */
function pointInputMessage(problem: InverseProblem, a: number, b: number, comp: ResolvedComposition, i: number): string {
  if (problem === 'pressure-temperature') {
    if (temperatureStatus(b) !== STATUS.OK) return temperatureMessage(b);
    if (!(Number.isFinite(a) && a > 0)) return `pressure ${a} must be a positive finite number (erg/cm³)`;
  } else if (problem === 'pressure-entropy') {
    if (!(Number.isFinite(a) && a > 0)) return `pressure ${a} must be a positive finite number (erg/cm³)`;
    if (!Number.isFinite(b)) return `specific entropy ${b} must be a finite number (erg/g/K)`;
  } else {
    if (densityStatus(a) !== STATUS.OK) return densityMessage(a);
    if (!Number.isFinite(b)) {
      const what = problem === 'density-energy' ? 'specific energy' : problem === 'density-pressure' ? 'pressure' : 'specific entropy';
      return `${what} ${b} must be a finite number`;
    }
  }
  return comp.messages[i];
}

function failureMessage(
  st: number, problem: InverseProblem, a: number, b: number, q: Qty, s: Solver1D, evals: number,
): string {
  const solvingT = problem.startsWith('density-');
  const unknown = solvingT ? 'temperature' : problem === 'pressure-temperature' ? 'density' : 'density and temperature';
  const range = solvingT
    ? `[${bounds.tMin}, ${bounds.tMax}] K`
    : `[${bounds.rhoMin}, ${bounds.rhoMax}] g/cm³`;
  const target = problem === 'pressure-entropy' ? `pressure ${fmt(a)} and specific entropy ${fmt(b)}` : `${QTY_WORD[q]} ${fmt(solvingT ? b : a)}`;
  const at = solvingT ? ` at density ${fmt(a)} g/cm³` : problem === 'pressure-temperature' ? ` at temperature ${fmt(b)} K` : '';
  switch (st) {
    case STATUS.NO_SOLUTION_BELOW_DOMAIN:
      return `no ${unknown} in ${range} gives ${target}${at}: the target is below what the domain reaches${Number.isFinite(s.fLo) ? ` (lowest ${fmt(s.fLo)})` : ''}`;
    case STATUS.NO_SOLUTION_ABOVE_DOMAIN:
      return `no ${unknown} in ${range} gives ${target}${at}: the target is above what the domain reaches${Number.isFinite(s.fHi) ? ` (highest ${fmt(s.fHi)})` : ''}`;
    case NOT_MONOTONE_NO_SOLUTION:
      return `no solution found for ${target}${at}: the relation is not monotone here (the Coulomb correction makes ∂P/∂ρ ≤ 0), so a solution may exist off the search path`;
    case STATUS.NOT_CONVERGED:
      return `no convergence for ${target}${at} after ${evals} evaluations`;
    case STATUS.PAIR_SOLVER_FAILED:
      return `the electron–positron neutrality solve failed while solving for ${unknown} (${target}${at})`;
    default:
      return `failed with status ${st} for ${target}${at}`;
  }
}
