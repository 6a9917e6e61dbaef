/**
 * Regime classification of a state of hot ionized matter (PHYSICS.md §6), in plain words with the
 * numbers behind them: electron degeneracy (from η), relativity (x = max(β, p_F/(m_e c)), with
 * β = k T/(m_e c²) and p_F = ħ(3π² n₋)^{1/3}), the pair fraction n₊/n₋, the radiation share of the
 * pressure, the ion Coulomb coupling Γ and phase (Γ_m = 175, Potekhin & Chabrier 2000,
 * Phys. Rev. E 62, 8554), and the validity warnings of state.ts.
 *
 * The class thresholds below (η ≤ −1 non-degenerate, −1 < η < 1 partially degenerate, η ≥ 1
 * degenerate, η ≥ 10 strongly degenerate; x < 0.1 non-relativistic, 0.1–1 trans-relativistic,
 * > 1 relativistic; Γ < 1 weakly coupled) are common practice, not taken from a published source.
 * Exact to rounding given the evaluated state.
 */
import { BOLTZMANN_K, ELECTRON_MASS, ELECTRON_REST_ENERGY, HBAR, SPEED_OF_LIGHT } from './constants.js';
import { GAMMA_MELT } from './coulomb.js';
import { describeWarnings, decodeWarnings, evaluate, type EvaluateOptions, type EvaluateResult, type StateInput, type WarningName } from './state.js';

export type DegeneracyClass = 'non-degenerate' | 'partially degenerate' | 'degenerate' | 'strongly degenerate';
export type RelativityClass = 'non-relativistic' | 'trans-relativistic' | 'relativistic';
export type CouplingClass = 'weakly coupled' | 'strongly coupled liquid' | 'crystallized';

// Thresholds: common practice (see the module comment).
export const ETA_NON_DEGENERATE = -1;
export const ETA_DEGENERATE = 1;
export const ETA_STRONGLY_DEGENERATE = 10;
export const X_TRANS_RELATIVISTIC = 0.1;
export const X_RELATIVISTIC = 1;

export interface RegimeClass {
  /** Index of the point in the input. */
  index: number;
  /** False where the state could not be evaluated (see `summary`). */
  valid: boolean;
  degeneracy: { eta: number; class: DegeneracyClass; text: string };
  relativity: { beta: number; fermiMomentum: number; x: number; class: RelativityClass; text: string };
  pairs: { ratio: number; text: string };
  radiation: { pressureFraction: number; text: string };
  coulomb: { gamma: number; class: CouplingClass; text: string };
  warnings: WarningName[];
  warningTexts: string[];
  /** One paragraph joining the texts above. */
  summary: string;
}

export function degeneracyClass(eta: number): DegeneracyClass {
  if (eta >= ETA_STRONGLY_DEGENERATE) return 'strongly degenerate';
  if (eta >= ETA_DEGENERATE) return 'degenerate';
  if (eta > ETA_NON_DEGENERATE) return 'partially degenerate';
  return 'non-degenerate';
}

export function relativityClass(x: number): RelativityClass {
  if (x > X_RELATIVISTIC) return 'relativistic';
  if (x >= X_TRANS_RELATIVISTIC) return 'trans-relativistic';
  return 'non-relativistic';
}

export function couplingClass(gamma: number): CouplingClass {
  if (gamma > GAMMA_MELT) return 'crystallized';
  if (gamma >= 1) return 'strongly coupled liquid';
  return 'weakly coupled';
}

const g3 = (x: number) => x.toPrecision(3);

/** Classify point i of an evaluated result. */
export function classifyPoint(res: EvaluateResult, i: number): RegimeClass {
  if (res.status[i] !== 0) {
    const msg = res.messages[i] || 'not evaluated';
    const nan = NaN;
    return {
      index: i,
      valid: false,
      degeneracy: { eta: nan, class: 'non-degenerate', text: '' },
      relativity: { beta: nan, fermiMomentum: nan, x: nan, class: 'non-relativistic', text: '' },
      pairs: { ratio: nan, text: '' },
      radiation: { pressureFraction: nan, text: '' },
      coulomb: { gamma: nan, class: 'weakly coupled', text: '' },
      warnings: [],
      warningTexts: [],
      summary: `not classified: ${msg}`,
    };
  }
  const T = res.temperature[i];
  const eta = res.eta[i];
  const dc = degeneracyClass(eta);
  const degText = `electrons ${dc} (η = ${g3(eta)})`;
  const beta = (BOLTZMANN_K * T) / ELECTRON_REST_ENERGY;
  const nMinus = res.electronDensity[i];
  const pF = (HBAR * Math.cbrt(3 * Math.PI * Math.PI * nMinus)) / (ELECTRON_MASS * SPEED_OF_LIGHT);
  const x = Math.max(beta, pF);
  const rc = relativityClass(x);
  const relText = `${rc} (x = ${g3(x)}: kT/m_ec² = ${g3(beta)}, p_F/m_ec = ${g3(pF)})`;
  const ratio = nMinus > 0 ? res.positronDensity[i] / nMinus : 0;
  const pairText = ratio > 1e-6 ? `electron–positron pairs present (n₊/n₋ = ${g3(ratio)})` : `pairs negligible (n₊/n₋ = ${g3(ratio)})`;
  const frac = res.radiationPressureFraction[i];
  const radText =
    frac > 0.5 ? `radiation-dominated (P_rad/P = ${g3(frac)})` : `radiation pressure fraction P_rad/P = ${g3(frac)}`;
  const gamma = res.coulombGamma[i];
  const cc = couplingClass(gamma);
  const couText =
    cc === 'crystallized'
      ? `ions crystallized (Γ = ${g3(gamma)} > Γ_m = ${GAMMA_MELT})`
      : cc === 'strongly coupled liquid'
        ? `ions a strongly coupled Coulomb liquid (Γ = ${g3(gamma)})`
        : `ions weakly coupled (Γ = ${g3(gamma)})`;
  const warnings = decodeWarnings(res.warnings[i]);
  const warningTexts = describeWarnings(res, i);
  const summary = [degText, relText, pairText, radText, couText].join('; ') + (warningTexts.length ? '. Warnings: ' + warningTexts.join('; ') : '') + '.';
  return {
    index: i,
    valid: true,
    degeneracy: { eta, class: dc, text: degText },
    relativity: { beta, fermiMomentum: pF, x, class: rc, text: relText },
    pairs: { ratio, text: pairText },
    radiation: { pressureFraction: frac, text: radText },
    coulomb: { gamma, class: cc, text: couText },
    warnings,
    warningTexts,
    summary,
  };
}

/**
 * Regime classification of every point: evaluates the state (same input and options as
 * `evaluate`), or classifies an existing evaluate/invert result when given one.
 */
export function classify(input: StateInput | EvaluateResult, options: EvaluateOptions = {}): RegimeClass[] {
  const res = isResult(input) ? input : evaluate(input, options);
  const out: RegimeClass[] = new Array(res.n);
  for (let i = 0; i < res.n; i++) out[i] = classifyPoint(res, i);
  return out;
}

function isResult(x: unknown): x is EvaluateResult {
  return typeof x === 'object' && x !== null && (x as EvaluateResult).status instanceof Uint8Array && typeof (x as EvaluateResult).n === 'number';
}
