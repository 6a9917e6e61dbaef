/**
 * invert.ts with method "table": the points of an inversion in chunks of TABLE_PROBE_CHUNK, each
 * point's search (invert-search.ts, isotherm-scan.ts, the probes of invert-probes.ts) resumed round by
 * round, every unfinished point's next (ρ, T) of a round evaluated in one call of the WebAssembly loop
 * (table-probe.ts). The steps are the per-point loop's; only the evaluator differs.
 */
import { STATUS, failPoint } from './state.js';
import type { ResolvedComposition } from './composition.js';
import { MAX_LOG_STEP, Mode, NOT_MONOTONE_NO_SOLUTION, PROBE_OK, SEARCH_PROBE, Solver1D, type Probe } from './invert-search.js';
import { IsothermScan, SCAN_EVALUATE, type IsothermSample } from './isotherm-scan.js';
import { COLUMN, COMPONENT, TABLE_PROBE_CHUNK, type TableProbeBatch } from './table-probe.js';
import {
  IsentropeProbe, NEWTON_EVALUATE, NEWTON_FALLBACK, Newton2D, Qty, bounds, densityAt, isentropeConditionNumber, newPointValues, restoreBounds, saveBounds,
  setTableBounds, temperatureAt,
  type DensityProbe, type PointValues, type TemperatureProbe,
} from './invert-probes.js';
import { failureMessage, markSolved, pointInputMessage, pointInputStatus } from './invert-outcomes.js';
import type { InverseProblem, InvertResult } from './invert.js';

/**
 * Method "table": the points of an inversion in chunks of TABLE_PROBE_CHUNK, whose evaluations run in
 * one call of the WebAssembly loop per round (evaluate's table method) instead of one JavaScript
 * per-point evaluation each (~1.4 µs): what the batched drivers below share — each point's bracket
 * (the table's grid at its Ye), filling and reading the loop's points, storing a solved point's state
 * (bit for bit evaluate's answer at its (ρ, T)) or its failure.
 */
export class BatchPoints {
  /** Per chunk slot: the point's bracket (bounds is one module-level object: set it from these per point). */
  private readonly brackets: Float64Array;
  constructor(
    readonly res: InvertResult, readonly problem: InverseProblem, private readonly keys: readonly [string, string],
    readonly A: Float64Array, readonly B: Float64Array, readonly comp: ResolvedComposition, readonly batch: TableProbeBatch, slots: number,
  ) {
    this.brackets = new Float64Array(8 * slots);
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
    saveBounds(this.brackets, j);
    return true;
  }

  /** Slot j's bracket into `bounds` (what the probes, searches and messages read). */
  useBounds(j: number): void {
    restoreBounds(this.brackets, j);
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
export function solveInBatches(bp: BatchPoints, tProbe: TemperatureProbe, dProbe: DensityProbe, edgeFloor: number, tol: number, maxEval: number): void {
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
        if (forDensity) bp.fill(k, i, densityAt(y), B[i]);
        else bp.fill(k, i, A[i], temperatureAt(y));
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
        const result = forDensity && (r === STATUS.OK || r === STATUS.NOT_MONOTONE) ? scans[j].verdict(r) : r;
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
        let result = sc.verdict(searchStatus[j]);
        if (sc.status === 0) {
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
export function solveIsentropesInBatches(bp: BatchPoints, tProbe: TemperatureProbe, edgeFloor: number, tol: number, maxEval: number): void {
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
        else bp.fill(k, i, probes[j].rho, temperatureAt(probes[j].inner.y));
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

