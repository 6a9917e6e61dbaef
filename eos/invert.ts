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
 * (invert-batches.ts): the same steps as the per-point loop, with every
 * unfinished point's next (ρ, T) of a 512-point chunk evaluated in one call of the WebAssembly loop.
 *
 * Accuracy (tests/eos/invert.test.ts, 10 000 states per problem over the whole domain): round
 * trips ≤ 2.5e-13 where the problem is well conditioned, within the rounding floor elsewhere.
 */
import {
  DENSITY_MAX, DENSITY_MIN, STATUS, TEMPERATURE_MAX, TEMPERATURE_MIN, PointKernel, allocateResult, checkMethod, failPoint, includeFlags, mixtureOf,
  prepareComposition, storePoint, COMPONENT_NAMES, type EvaluateOptions, type EvaluateResult,
} from './state.js';
import { toFloat64Column, type Column, type CompositionInput } from './composition.js';
import { MAX_LOG_STEP, Mode, NOT_MONOTONE_NO_SOLUTION, Solver1D } from './invert-search.js';
import { IsothermScan } from './isotherm-scan.js';
import { TABLE_PROBE_CHUNK, TableProbeBatch } from './table-probe.js';
import {
  DensityProbe, IsentropeProbe, NEWTON_FALLBACK, Newton2D, PointContext, Qty, TABLE_EDGE_FLOOR_DEFAULT, TemperatureProbe, bounds, isentropeConditionNumber,
  kernelValues, magnitude, newPointValues, scanIsotherm, setBounds,
} from './invert-probes.js';
import { failureMessage, markSolved, pointInputMessage, pointInputStatus } from './invert-outcomes.js';
import { BatchPoints, solveInBatches, solveIsentropesInBatches } from './invert-batches.js';
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
        st = scan.verdict(st);
        if (scan.status === 0 && scan.evaluations > 0) {
          // the scan moved the kernel: the solution's state comes from one more evaluation there
          const st2 = ctx.compute(rhoStar, b);
          outer.iterations++;
          if (st2 !== STATUS.OK) st = st2;
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
const CONDITION_VALUES = newPointValues();
