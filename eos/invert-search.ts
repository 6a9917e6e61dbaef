/**
 * The one-dimensional search of invert.ts: safeguarded Newton iteration with a bracket and bisection
 * whenever a Newton step leaves it (Press et al. 2007, "Numerical Recipes", 3rd ed., §9.4), the step
 * taken on ln(f − f(y_min)) or ln f where that makes the relation nearly linear (see invert.ts).
 *
 * The search is resumable: `start` names the first y to evaluate, and each `next` takes the value
 * there and names the following y (SEARCH_PROBE) or ends with a status. `solve` runs the two in a
 * loop with one probe; the table method's batched inversion (invert.ts) keeps one search per point
 * and evaluates all their next y in one call of the WebAssembly loop.
 */
import { STATUS } from './state.js';

// Outcome of one probe evaluation inside the 1-D search.
export const PROBE_OK = 0;
export const PROBE_TOO_LOW = -1; // no value, but the unknown must increase
export const PROBE_TOO_HIGH = -2; // no value, but the unknown must decrease
/** `start`/`next`: evaluate at `y` next (the search goes on). */
export const SEARCH_PROBE = -100;
/** Internal: not monotone and no solution found (reported as NOT_MONOTONE with converged = 0). */
export const NOT_MONOTONE_NO_SOLUTION = 255;

export const EPS = 2.220446049250313e-16;
export const MAX_LOG_STEP = 10;

export const enum Mode { LowerEnd, Log, Linear }

/**
 * A monotone increasing function f(y) on [yLo, yHi]. Results of the last evaluation are read from f
 * (value), fy (df/dy) and scale (magnitude of the summed terms, for the rounding floor).
 */
export abstract class Probe {
  f = 0;
  fy = 0;
  scale = 0;
  /** Evaluate at y; return PROBE_OK, PROBE_TOO_LOW, PROBE_TOO_HIGH or a STATUS failure (> 0). */
  abstract at(y: number): number;
  /** Initial guess from the value and slope at the lower edge (LowerEnd mode only). */
  abstract guess(fLo: number, fyLo: number, target: number): number;
}

/** The search for f(y) = target; all state in fields (no allocation per point). */
export class Solver1D {
  iterations = 0;
  /** The relation was seen decreasing somewhere during the search. */
  nonMonotone = false;
  /** While searching: where to evaluate next; after a solution: its coordinate. */
  y = NaN;
  /** Value at the lower edge when it was evaluated (for messages). */
  fLo = NaN;
  /** Last value seen at the upper edge (for messages). */
  fHi = NaN;
  /** Final bracket. */
  a = NaN;
  b = NaN;
  private bad = new Float64Array(32);
  private nBad = 0;
  /** Largest step in y per iteration. */
  maxStep = MAX_LOG_STEP;
  /**
   * Method "table": relative accuracy of the forward answer (the table's reported maximum error).
   * A target that misses the value at a bracket edge by no more than this times the summed
   * magnitudes is reached there: where the given quantity barely depends on the unknown (P(ρ) of a
   * hot pair- and radiation-dominated gas, κ up to ~1e19) the interpolation error outweighs the
   * true variation across the whole bracket, so the table's P(ρ) may sit just above the target at
   * the lowest density (as the exact method's does within rounding, which isConverged accepts).
   */
  edgeFloor = 0;
  // the search in progress
  private yLo = 0;
  private yHi = 0;
  private target = 0;
  private mode: Mode = Mode.Linear;
  private warm = NaN;
  private stepTol = 0;
  private budgetEnd = 0;
  /** The lower-edge evaluation of Mode.LowerEnd is pending. */
  private atLowerEdge = false;
  /** f(yLo) once known (the base of the LowerEnd step). */
  private fBase = NaN;
  /** Working bracket: f(lo) < target known when loKnown, f(hi) > target when hiKnown. */
  private lo = 0;
  private hi = 0;
  private loKnown = false;
  private hiKnown = false;

  constructor(public tol: number, private maxEval: number) {}

  /**
   * Solve f(y) = target with probe p. `warm` (finite) replaces the guess from the lower edge.
   * Returns a STATUS code; on OK or NOT_MONOTONE the probe's kernel holds the solution and `y` its
   * coordinate.
   */
  solve(p: Probe, yLo: number, yHi: number, target: number, mode: Mode, warm: number): number {
    let r = this.start(yLo, yHi, target, mode, warm);
    while (r === SEARCH_PROBE) r = this.next(p, p.at(this.y));
    return r;
  }

  /** Begins a search; returns SEARCH_PROBE (evaluate at `y`) or a final status. */
  start(yLo: number, yHi: number, target: number, mode: Mode, warm: number): number {
    this.nonMonotone = false;
    this.nBad = 0;
    this.fLo = NaN;
    this.fHi = NaN;
    this.yLo = yLo;
    this.yHi = yHi;
    this.target = target;
    this.mode = mode;
    this.warm = warm;
    this.stepTol = this.tol / 8;
    this.budgetEnd = this.iterations + this.maxEval;
    this.fBase = NaN;
    this.lo = yLo;
    this.hi = yHi;
    this.loKnown = false;
    this.hiKnown = false;
    if (mode === Mode.LowerEnd) {
      this.atLowerEdge = true;
      this.y = yLo;
      return SEARCH_PROBE;
    }
    this.atLowerEdge = false;
    return this.first(warm);
  }

  /**
   * Takes the evaluation at `y`: st is what p.at(y) returned, and p.f, p.fy, p.scale hold the
   * values when st is PROBE_OK (p.guess is asked for the first step after the lower edge).
   * Returns SEARCH_PROBE (evaluate at the new `y`) or a final status.
   */
  next(p: Probe, st: number): number {
    this.iterations++;
    if (st > 0) return st;
    const yLo = this.yLo, yHi = this.yHi, target = this.target;
    if (this.atLowerEdge) {
      this.atLowerEdge = false;
      if (st === PROBE_TOO_HIGH) return STATUS.NO_SOLUTION_BELOW_DOMAIN;
      if (st === PROBE_OK) {
        const r = p.f - target;
        this.fLo = p.f;
        this.noteSlope(yLo, p.fy);
        if (this.isConverged(r, p) || (r > 0 && r <= this.edgeFloor * p.scale)) return this.found(yLo, p.fy, yLo, yHi);
        if (r > 0) return this.nonMonotone ? NOT_MONOTONE_NO_SOLUTION : STATUS.NO_SOLUTION_BELOW_DOMAIN;
        this.fBase = p.f;
        this.loKnown = true;
        return this.first(Number.isFinite(this.warm) ? this.warm : p.guess(p.f, p.fy, target));
      }
      this.loKnown = true; // too low at the lower edge: any solution is above
      return this.first(Number.isFinite(this.warm) ? this.warm : 0.5 * (yLo + yHi));
    }
    const y = this.y;
    let next: number;
    if (st === PROBE_TOO_LOW || st === PROBE_TOO_HIGH) {
      if (st === PROBE_TOO_LOW) {
        if (y >= yHi) return this.nonMonotone ? NOT_MONOTONE_NO_SOLUTION : STATUS.NO_SOLUTION_ABOVE_DOMAIN;
        this.lo = y;
        this.loKnown = true;
      } else {
        if (y <= yLo) return this.nonMonotone ? NOT_MONOTONE_NO_SOLUTION : STATUS.NO_SOLUTION_BELOW_DOMAIN;
        this.hi = y;
        this.hiKnown = true;
      }
      if (this.loKnown && this.hiKnown) next = 0.5 * (this.lo + this.hi);
      else if (st === PROBE_TOO_LOW) next = Math.min(yHi, y + this.maxStep);
      else next = Math.max(yLo, y - this.maxStep);
      return this.probeAt(next);
    }
    const r = p.f - target;
    this.noteSlope(y, p.fy);
    if (y >= yHi) this.fHi = p.f;
    if (this.isConverged(r, p)) return this.found(y, p.fy, this.lo, this.hi);
    if (r > 0) {
      this.hi = y;
      this.hiKnown = true;
    } else {
      this.lo = y;
      this.loKnown = true;
    }
    let dy = NaN;
    if (p.fy > 0) {
      dy = -r / p.fy;
      if (this.mode === Mode.LowerEnd) {
        const g = p.f - this.fBase;
        const gt = target - this.fBase;
        if (g > 0 && gt > 0) dy = -(Math.log(g) - Math.log(gt)) * (g / p.fy);
      } else if (this.mode === Mode.Log && p.f > 0 && target > 0) {
        dy = -(Math.log(p.f) - Math.log(target)) * (p.f / p.fy);
      }
    }
    if (dy > this.maxStep) dy = this.maxStep;
    else if (dy < -this.maxStep) dy = -this.maxStep;
    next = y + dy;
    const a = this.lo, b = this.hi, aKnown = this.loKnown, bKnown = this.hiKnown;
    const lowEdge = aKnown ? a : yLo;
    const highEdge = bKnown ? b : yHi;
    if (!(next > lowEdge && next < highEdge)) {
      if (aKnown && bKnown) next = 0.5 * (a + b);
      else if (!bKnown) {
        // the root is above y and above every point seen
        if (y >= yHi && -r <= this.edgeFloor * p.scale) return this.found(y, p.fy, a, b);
        if (y >= yHi) return this.nonMonotone ? NOT_MONOTONE_NO_SOLUTION : STATUS.NO_SOLUTION_ABOVE_DOMAIN;
        next = Math.min(yHi, Number.isFinite(dy) ? y + Math.max(dy, 1e-3) : y + this.maxStep);
        if (!(next > y)) next = yHi;
      } else {
        if (y <= yLo) return this.nonMonotone ? NOT_MONOTONE_NO_SOLUTION : STATUS.NO_SOLUTION_BELOW_DOMAIN;
        next = Math.max(yLo, Number.isFinite(dy) ? y + Math.min(dy, -1e-3) : y - this.maxStep);
        if (!(next < y)) next = yLo;
      }
    }
    if (aKnown && bKnown && b - a <= 4 * EPS * Math.max(1, Math.abs(a))) {
      // the bracket is exhausted at the resolution of y: the solution is here
      return this.found(y, p.fy, a, b);
    }
    return this.probeAt(next);
  }

  /** The first step inside the bracket (from the guess or the warm start). */
  private first(y: number): number {
    const yLo = this.yLo, yHi = this.yHi;
    if (!Number.isFinite(y)) y = 0.5 * (yLo + yHi);
    y = Math.min(yHi, Math.max(yLo, y));
    if (this.loKnown && y <= yLo) y = yLo + Math.min(1e-3, 0.5 * (yHi - yLo));
    return this.probeAt(y);
  }

  private probeAt(y: number): number {
    if (!(this.iterations < this.budgetEnd)) return STATUS.NOT_CONVERGED;
    this.y = y;
    return SEARCH_PROBE;
  }

  private noteSlope(y: number, fy: number): void {
    if (fy > 0) return;
    this.nonMonotone = true;
    if (this.nBad < this.bad.length) this.bad[this.nBad++] = y;
  }

  /**
   * Where a solution was found: NOT_MONOTONE if the relation decreases at the solution or at a
   * point seen inside the final bracket (another solution may then exist nearby), else OK. A
   * decrease seen outside the final bracket does not make the solution ambiguous there.
   */
  private found(y: number, fy: number, a: number, b: number): number {
    this.y = y;
    this.a = a;
    this.b = b;
    if (!(fy > 0)) return STATUS.NOT_MONOTONE;
    for (let i = 0; i < this.nBad; i++) if (this.bad[i] > a && this.bad[i] < b) return STATUS.NOT_MONOTONE;
    return STATUS.OK;
  }

  private isConverged(r: number, p: Probe): boolean {
    if (Math.abs(r) <= 4 * EPS * p.scale) return true;
    return p.fy > 0 && Math.abs(r / p.fy) <= this.stepTol;
  }
}
