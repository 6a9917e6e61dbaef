/**
 * What invert.ts reports per point: whether a point's inputs are accepted, the status and message of
 * a solved point, and the message of a point without a solution (the reachable value, the range, the
 * evaluations spent).
 */
import { STATUS, compositionStatus, densityMessage, densityStatus, temperatureMessage, temperatureStatus } from './state.js';
import type { ResolvedComposition } from './composition.js';
import { NOT_MONOTONE_NO_SOLUTION, type Solver1D } from './invert-search.js';
import { Qty, bounds } from './invert-probes.js';
import type { InverseProblem, InvertResult } from './invert.js';

const QTY_WORD: Record<number, string> = { [Qty.P]: 'pressure', [Qty.E]: 'specific energy', [Qty.S]: 'specific entropy' };
const fmt = (x: number) => (Number.isFinite(x) ? x.toPrecision(6) : String(x));

/** Status, converged flag and message of a point whose search found a solution (OK or NOT_MONOTONE). */
export function markSolved(res: InvertResult, i: number, st: number, problem: InverseProblem, keyA: string, keyB: string): void {
  res.converged[i] = 1;
  res.status[i] = st;
  if (st === STATUS.NOT_MONOTONE) {
    res.messages[i] = `a solution was found, but ${problem === 'pressure-entropy' ? 'P along the isentrope' : 'P(ρ) at this T'} is not monotone here (the Coulomb correction makes ∂P/∂ρ ≤ 0): other states may give the same ${keyA} and ${keyB}`;
  }
}

/** Status of one point's inputs (no allocation). */
export function pointInputStatus(problem: InverseProblem, a: number, b: number, comp: ResolvedComposition, i: number): number {
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
export function pointInputMessage(problem: InverseProblem, a: number, b: number, comp: ResolvedComposition, i: number): string {
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

export function failureMessage(
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
