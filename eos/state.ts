/**
 * The full equation of state of hot, fully ionized matter at given density, temperature and
 * composition: electrons and positrons (electron-positron.ts, exact Fermi–Dirac integrals), ideal
 * ions (ions.ts, Sackur–Tetrode), photons (radiation.ts, Planck) and the ion Coulomb correction
 * (coulomb.ts, Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554), summed per unit mass, with the
 * first derivatives in ρ, T, Abar and Zbar and the derived quantities of PHYSICS.md §4:
 *
 *   χ_ρ = (ρ/P) ∂P/∂ρ|_T,  χ_T = (T/P) ∂P/∂T|_ρ,  c_v = ∂e/∂T|_ρ,
 *   Γ3 − 1 = P χ_T/(ρ T c_v) = (∂P/∂T)/(ρ c_v),  Γ1 = χ_T(Γ3 − 1) + χ_ρ,
 *   ∇_ad = (Γ3 − 1)/Γ1,  c_p = c_v Γ1/χ_ρ,  c_s² = Γ1 P/ρ = ∂P/∂ρ + T (∂P/∂T)²/(ρ² c_v)
 * (Cox & Giuli 1968, "Principles of Stellar Structure", ch. 9; the relativistic sound speed
 * c_s² = Γ1 P/(ρ + (ρe + P)/c²) uses the enthalpy density with the rest-mass density ρc²).
 *
 * Accuracy: the ion, photon and Coulomb terms are exact to rounding for their models; the
 * electron–positron terms carry the accuracy of electron-positron.ts (goals: 1e-10 relative for
 * P, e, s, 1e-8 for first derivatives). Thermodynamic consistency (Maxwell relations) holds to the
 * consistency of the pair-gas derivatives, since every other term is differentiated analytically.
 *
 * Per-point problems (NaN, non-positive or out-of-range density, out-of-range temperature, bad
 * composition, a failed pair-gas solve) never throw: the point gets a status code and message, and
 * its outputs are NaN; every other point is evaluated. Structural problems (arrays of different
 * lengths, an unknown option) throw at the call.
 */
import {
  AVOGADRO, BOLTZMANN_K, CONSTANTS_SET, ELECTRON_MASS, ELECTRON_REST_ENERGY, ELEMENTARY_CHARGE, HBAR, RADIATION_A,
  SPEED_OF_LIGHT,
} from './constants.js';
import {
  COMPOSITION_BAD_FRACTIONS, COMPOSITION_OUT_OF_DOMAIN, broadcastLength, readFloat64Column, resolveComposition,
  type Column, type CompositionInput, type ResolvedComposition,
} from './composition.js';
import { createPairGasState, pairGas, type PairGasState, type PairSpecies } from './electron-positron.js';
import { LN_QC_UNIT, R_GAS, createIonGasTerms, ionGas } from './ions.js';
import { createPhotonGasTerms, photonGas } from './radiation.js';
import {
  E2_OVER_K, FOUR_PI_OVER_3_NA, GAMMA_MELT, HALF_LN_A2, INV_SQRT_A2, OCP_A3, coulombCorrection, createCoulombTerms,
} from './coulomb.js';
import {
  LN_HALF_AVOGADRO, LN_K_OVER_MEC2, LN_SHARE_FLOOR, PAIR_Z_C, TABLE_OK, prepareTable, tablePairGas, type FreeEnergyTable,
} from './free-energy-table.js';
import { FLAG, OUTPUT_COLUMNS, OUTPUT_COMPONENT_COLUMNS, TableBatch } from './wasm/table-batch.js';

// ---------------------------------------------------------------------------------------------
// Domain, status codes, warnings
// ---------------------------------------------------------------------------------------------

export const DENSITY_MIN = 1e-12;
export const DENSITY_MAX = 1e15;
export const TEMPERATURE_MIN = 1e3;
export const TEMPERATURE_MAX = 1e13;
/** Density above which free neutrons drip out of nuclei (≈ 4e11 g/cm³; common practice). */
export const NEUTRON_DRIP_DENSITY = 4e11;

/** Per-point status codes (shared by evaluate and invert). 0 means the point was computed. */
export const STATUS = Object.freeze({
  OK: 0,
  INVALID_NUMBER: 1,
  DENSITY_NOT_POSITIVE: 2,
  DENSITY_OUT_OF_RANGE: 3,
  TEMPERATURE_OUT_OF_RANGE: 4,
  COMPOSITION_OUT_OF_DOMAIN: 5,
  MASS_FRACTIONS_INVALID: 6,
  PAIR_SOLVER_FAILED: 7,
  /** method 'table': ρYe or T outside the table's grid (no extrapolation). */
  TABLE_OUT_OF_RANGE: 8,
  // inversions (invert.ts)
  TARGET_INVALID: 10,
  NO_SOLUTION_BELOW_DOMAIN: 11,
  NO_SOLUTION_ABOVE_DOMAIN: 12,
  NOT_CONVERGED: 13,
  NOT_MONOTONE: 14,
});
export type StatusCode = (typeof STATUS)[keyof typeof STATUS];

/** Generic text of each status code (the per-point `messages` add the values). */
export const STATUS_TEXT: Readonly<Record<number, string>> = Object.freeze({
  0: 'ok',
  1: 'an input is not a finite number',
  2: 'density must be positive',
  3: `density outside the domain [${DENSITY_MIN}, ${DENSITY_MAX}] g/cm³`,
  4: `temperature outside the domain [${TEMPERATURE_MIN}, ${TEMPERATURE_MAX}] K`,
  5: 'composition outside the domain 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120)',
  6: 'mass fractions invalid (negative, not finite, or not summing to 1 within 1e-6)',
  7: 'the electron–positron charge-neutrality solve failed',
  8: 'ρ·Ye or T outside the grid of the free-energy table (method "table"); use method "exact" or a table covering the point',
  10: 'the target value is not a finite number, or not allowed for this problem',
  11: 'no solution inside the domain: the target lies below what the domain reaches',
  12: 'no solution inside the domain: the target lies above what the domain reaches',
  13: 'the iteration did not converge',
  14: 'the relation is not monotone here: a solution may not exist or may not be unique',
});

/** Warning bit flags (a point can carry several). */
export const WARNING = Object.freeze({
  PARTIAL_IONIZATION: 1,
  NEUTRON_DRIP: 2,
  CRYSTALLIZED: 4,
  NON_POSITIVE_PRESSURE: 8,
  MECHANICALLY_UNSTABLE: 16,
  QUANTUM_IONS: 32,
});
export type WarningName = keyof typeof WARNING;

const WARNING_NAMES = Object.keys(WARNING) as WarningName[];

/** Names of the warning flags set in `bits`. */
export function decodeWarnings(bits: number): WarningName[] {
  const out: WarningName[] = [];
  for (const name of WARNING_NAMES) if (bits & WARNING[name]) out.push(name);
  return out;
}

// Physical scales used by the warning criteria.
const BOHR_RADIUS = (HBAR * HBAR) / (ELECTRON_MASS * ELEMENTARY_CHARGE * ELEMENTARY_CHARGE);
const RYDBERG = (ELEMENTARY_CHARGE * ELEMENTARY_CHARGE) / (2 * BOHR_RADIUS);
/**
 * Likely partial ionization (our criterion, a heuristic): the innermost (K-shell, hydrogenic)
 * electron of the most charged nucleus present, with binding Z²·Ry, is neither thermally ionized
 * (k T < Z² Ry / 15; the factor 15 stands for the logarithm in Saha's equation, so that hydrogen is
 * flagged below ≈ 1.05e4 K) nor pressure ionized (mean ion-sphere radius a_i larger than the
 * K-shell radius a_B/Z). Both conditions must hold.
 */
export const PARTIAL_IONIZATION_SAHA_FACTOR = 15;

export function partialIonizationLikely(rho: number, T: number, abar: number, zmax: number): boolean {
  if (BOLTZMANN_K * T >= (zmax * zmax * RYDBERG) / PARTIAL_IONIZATION_SAHA_FACTOR) return false;
  const ionSphere = Math.cbrt((3 * abar) / (4 * Math.PI * rho * AVOGADRO));
  return ionSphere > BOHR_RADIUS / zmax;
}

// ---------------------------------------------------------------------------------------------
// Inputs, options, outputs
// ---------------------------------------------------------------------------------------------

export type ComponentName = 'electrons' | 'positrons' | 'ions' | 'photons' | 'coulomb';
export const COMPONENT_NAMES: readonly ComponentName[] = ['electrons', 'positrons', 'ions', 'photons', 'coulomb'];

export type StateInput = { density: Column; temperature: Column } & CompositionInput;

export interface EvaluateOptions {
  /** 'exact' (default), or 'table' (free-energy table, Timmes & Swesty 2000; needs `table`). */
  method?: 'exact' | 'table';
  /** The free-energy table for method 'table' (built by eos/free-energy-table.ts, loaded by the caller). */
  table?: FreeEnergyTable;
  /** Components summed into the totals (default all five). */
  components?: readonly ComponentName[];
  /** 'newtonian' (default) c_s² = Γ1 P/ρ, or 'relativistic' c_s² = Γ1 P/(ρ + (ρe + P)/c²). */
  soundSpeed?: 'newtonian' | 'relativistic';
  /** Also return the three normalized Maxwell-relation residuals per point. */
  maxwellResiduals?: boolean;
  /**
   * Fill the per-component columns (`components`; default true). false leaves them empty (length 0)
   * and saves 45 of the ~80 columns' memory and writes, for callers that need only the totals.
   */
  breakdown?: boolean;
  /**
   * Write into this earlier result instead of allocating a new one (same number of points and the
   * same `maxwellResiduals` setting; every column is overwritten). For callers that evaluate batch
   * after batch: the first touch of fresh memory costs more than the table evaluation itself here
   * (~4 µs per point for the ~80 columns on this machine, see bench/eos.ts).
   */
  into?: EvaluateResult;
}

export interface ComponentColumns {
  pressure: Float64Array;
  specificEnergy: Float64Array;
  specificEntropy: Float64Array;
  dPdRho: Float64Array;
  dPdT: Float64Array;
  dEdRho: Float64Array;
  dEdT: Float64Array;
  dSdRho: Float64Array;
  dSdT: Float64Array;
}

export interface MaxwellResidualColumns {
  /** (ρ²∂e/∂ρ − (P − T∂P/∂T)) / (|ρ²∂e/∂ρ| + |P| + |T∂P/∂T|) */
  energy: Float64Array;
  /** (∂s/∂T − (1/T)∂e/∂T) / (|∂s/∂T| + |(1/T)∂e/∂T|) */
  entropyT: Float64Array;
  /** (∂s/∂ρ + (1/ρ²)∂P/∂T) / (|∂s/∂ρ| + |(1/ρ²)∂P/∂T|) */
  entropyRho: Float64Array;
}

export interface EvaluateResult {
  n: number;
  method: 'exact' | 'table';
  constantsSet: string;
  /** Per-component columns; empty (length 0) when evaluated with `breakdown: false`. */
  components: Record<ComponentName, ComponentColumns>;
  /** Whether `components` holds the per-component columns (options.breakdown). */
  breakdown: boolean;
  /** Which components were summed into the totals. */
  included: readonly ComponentName[];
  // inputs, as evaluated (per point)
  density: Float64Array;
  temperature: Float64Array;
  abar: Float64Array;
  zbar: Float64Array;
  ye: Float64Array;
  // totals, CGS, per unit mass where specific
  pressure: Float64Array;
  specificEnergy: Float64Array;
  specificEntropy: Float64Array;
  dPdRho: Float64Array;
  dPdT: Float64Array;
  dEdRho: Float64Array;
  dEdT: Float64Array;
  dSdRho: Float64Array;
  dSdT: Float64Array;
  dPdAbar: Float64Array;
  dPdZbar: Float64Array;
  dEdAbar: Float64Array;
  dEdZbar: Float64Array;
  cv: Float64Array;
  cp: Float64Array;
  gamma1: Float64Array;
  gamma3: Float64Array;
  chiRho: Float64Array;
  chiT: Float64Array;
  nablaAd: Float64Array;
  soundSpeed: Float64Array;
  eta: Float64Array;
  electronDensity: Float64Array;
  positronDensity: Float64Array;
  coulombGamma: Float64Array;
  /** Radiation pressure over total pressure (for the regime classification). */
  radiationPressureFraction: Float64Array;
  status: Uint8Array;
  /** '' where status is OK, otherwise what was wrong, with the values and what to do. */
  messages: string[];
  /** Warning bit flags (WARNING); decode with decodeWarnings or describeWarnings. */
  warnings: Uint8Array;
  maxwell?: MaxwellResidualColumns;
}

export const TOTAL_COLUMNS = [
  'pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT',
  'dPdAbar', 'dPdZbar', 'dEdAbar', 'dEdZbar', 'cv', 'cp', 'gamma1', 'gamma3', 'chiRho', 'chiT', 'nablaAd',
  'soundSpeed', 'eta', 'electronDensity', 'positronDensity', 'coulombGamma', 'radiationPressureFraction',
] as const;
export const COMPONENT_COLUMNS = [
  'pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT',
] as const;

// ---------------------------------------------------------------------------------------------
// The per-point kernel (shared with invert.ts)
// ---------------------------------------------------------------------------------------------

/** One component's terms per unit mass at one point. */
export interface Terms {
  P: number; dPdRho: number; dPdT: number; dPdAbar: number; dPdZbar: number;
  e: number; dEdRho: number; dEdT: number; dEdAbar: number; dEdZbar: number;
  s: number; dSdRho: number; dSdT: number;
}

function newTerms(): Terms {
  return { P: 0, dPdRho: 0, dPdT: 0, dPdAbar: 0, dPdZbar: 0, e: 0, dEdRho: 0, dEdT: 0, dEdAbar: 0, dEdZbar: 0, s: 0, dSdRho: 0, dSdT: 0 };
}

function addTerms(to: Terms, t: Terms): void {
  to.P += t.P; to.dPdRho += t.dPdRho; to.dPdT += t.dPdT; to.dPdAbar += t.dPdAbar; to.dPdZbar += t.dPdZbar;
  to.e += t.e; to.dEdRho += t.dEdRho; to.dEdT += t.dEdT; to.dEdAbar += t.dEdAbar; to.dEdZbar += t.dEdZbar;
  to.s += t.s; to.dSdRho += t.dSdRho; to.dSdT += t.dSdT;
}

function subtractTerms(out: Terms, a: Terms, b: Terms): void {
  out.P = a.P - b.P; out.dPdRho = a.dPdRho - b.dPdRho; out.dPdT = a.dPdT - b.dPdT;
  out.dPdAbar = a.dPdAbar - b.dPdAbar; out.dPdZbar = a.dPdZbar - b.dPdZbar;
  out.e = a.e - b.e; out.dEdRho = a.dEdRho - b.dEdRho; out.dEdT = a.dEdT - b.dEdT;
  out.dEdAbar = a.dEdAbar - b.dEdAbar; out.dEdZbar = a.dEdZbar - b.dEdZbar;
  out.s = a.s - b.s; out.dSdRho = a.dSdRho - b.dSdRho; out.dSdT = a.dSdT - b.dSdT;
}

function zeroTerms(t: Terms): void {
  t.P = t.dPdRho = t.dPdT = t.dPdAbar = t.dPdZbar = 0;
  t.e = t.dEdRho = t.dEdT = t.dEdAbar = t.dEdZbar = 0;
  t.s = t.dSdRho = t.dSdT = 0;
}

/** Per-volume pair species → per-mass terms with ρ, Abar, Zbar derivatives through d = ρ Zbar/Abar. */
function pairSpeciesTerms(sp: PairSpecies, rho: number, abar: number, zbar: number, t: Terms): void {
  const ye = zbar / abar;
  const dDdAbar = -(rho * ye) / abar;
  const dDdZbar = rho / abar;
  t.P = sp.pressure;
  t.dPdRho = ye * sp.dPdD;
  t.dPdT = sp.dPdT;
  t.dPdAbar = sp.dPdD * dDdAbar;
  t.dPdZbar = sp.dPdD * dDdZbar;
  const e = sp.energy / rho;
  t.e = e;
  t.dEdRho = (ye * sp.dUdD - e) / rho;
  t.dEdT = sp.dUdT / rho;
  t.dEdAbar = (sp.dUdD * dDdAbar) / rho;
  t.dEdZbar = (sp.dUdD * dDdZbar) / rho;
  const s = sp.entropy / rho;
  t.s = s;
  t.dSdRho = (ye * sp.dSdD - s) / rho;
  t.dSdT = sp.dSdT / rho;
}

/** Mixture data prepared once per call for the Coulomb sum. */
export interface MixtureData {
  count: number;
  z53: Float64Array;
  y: Float64Array;
}

export function mixtureOf(comp: ResolvedComposition): MixtureData | null {
  if (comp.species === null) return null;
  const z53 = new Float64Array(comp.species.count);
  for (let j = 0; j < z53.length; j++) z53[j] = comp.species.z[j] * Math.cbrt(comp.species.z[j] * comp.species.z[j]); // Z^{5/3}, as coulomb.ts
  return { count: comp.species.count, z53, y: comp.species.y };
}

export interface IncludeFlags {
  electrons: boolean;
  positrons: boolean;
  ions: boolean;
  photons: boolean;
  coulomb: boolean;
}

export function includeFlags(components: readonly ComponentName[] | undefined): IncludeFlags {
  const list = components ?? COMPONENT_NAMES;
  if (!Array.isArray(list)) throw new Error('options.components must be an array of component names');
  for (const c of list) {
    if (!COMPONENT_NAMES.includes(c)) {
      throw new Error(`unknown component "${String(c)}"; use some of ${COMPONENT_NAMES.join(', ')}`);
    }
  }
  return {
    electrons: list.includes('electrons'),
    positrons: list.includes('positrons'),
    ions: list.includes('ions'),
    photons: list.includes('photons'),
    coulomb: list.includes('coulomb'),
  };
}

/**
 * Evaluates one point into preallocated scratch: no allocation per call. Used by evaluate() and
 * by the inversions, which call it repeatedly while iterating.
 */
export class PointKernel {
  readonly pair: PairGasState = createPairGasState();
  readonly electrons = newTerms();
  readonly positrons = newTerms();
  readonly ions = newTerms();
  readonly photons = newTerms();
  readonly coulomb = newTerms();
  readonly total = newTerms();
  private readonly pairTotal = newTerms();
  coulombGamma = 0;
  ionDegeneracy = 0;
  private readonly ionScratch = createIonGasTerms();
  private readonly photonScratch = createPhotonGasTerms();
  private readonly coulombScratch = createCoulombTerms();
  private lastLogD = NaN;
  private lastLogT = NaN;
  private lastEta = NaN;

  constructor(readonly include: IncludeFlags, readonly table: FreeEnergyTable | null = null) {}

  /** Forget the warm start (call when jumping far away). */
  resetWarmStart(): void {
    this.lastLogD = NaN;
  }

  /** Computes all terms at (rho, T); returns STATUS.OK, STATUS.PAIR_SOLVER_FAILED or STATUS.TABLE_OUT_OF_RANGE. */
  compute(rho: number, T: number, abar: number, zbar: number, mixture: MixtureData | null, row: number): number {
    const d = (rho * zbar) / abar;
    // Warm start η from the previous point when it is close in (log d, log T): far away the
    // pair-gas solver's own initial guess is better than a stale η.
    if (this.table !== null) {
      if (tablePairGas(this.table, d, T, this.pair) !== TABLE_OK) return STATUS.TABLE_OUT_OF_RANGE;
    } else if (this.exactPair(d, T) !== STATUS.OK) return STATUS.PAIR_SOLVER_FAILED;
    return this.addTerms(rho, T, abar, zbar, mixture, row);
  }

  private exactPair(d: number, T: number): number {
    const logD = Math.log(d);
    const logT = Math.log(T);
    let guess: number | undefined;
    if (Math.abs(logD - this.lastLogD) < 0.25 && Math.abs(logT - this.lastLogT) < 0.25) guess = this.lastEta;
    let st = guess === undefined ? pairGas(d, T, this.pair) : pairGas(d, T, this.pair, guess);
    if (st !== 0 && guess !== undefined) st = pairGas(d, T, this.pair); // retry from the solver's own guess
    if (st !== 0 || !Number.isFinite(this.pair.pressure)) {
      this.lastLogD = NaN;
      return STATUS.PAIR_SOLVER_FAILED;
    }
    this.lastLogD = logD;
    this.lastLogT = logT;
    this.lastEta = this.pair.eta;
    return STATUS.OK;
  }

  private addTerms(rho: number, T: number, abar: number, zbar: number, mixture: MixtureData | null, row: number): number {
    const inc = this.include;

    // The pair gas' totals are the accurate ones where the electrons are degenerate
    // (electron-positron.ts takes their T-derivatives from exact identities there), and positrons
    // are never degenerate; so the electron component is the total minus the positrons, and the
    // components add up to the totals exactly.
    pairSpeciesTerms(this.pair, rho, abar, zbar, this.pairTotal);
    pairSpeciesTerms(this.pair.positrons, rho, abar, zbar, this.positrons);
    subtractTerms(this.electrons, this.pairTotal, this.positrons);

    const ion = this.ionScratch;
    ionGas(rho, T, abar, ion);
    const it = this.ions;
    it.P = ion.pressure; it.dPdRho = ion.dPdRho; it.dPdT = ion.dPdT; it.dPdAbar = ion.dPdAbar; it.dPdZbar = ion.dPdZbar;
    it.e = ion.energy; it.dEdRho = ion.dEdRho; it.dEdT = ion.dEdT; it.dEdAbar = ion.dEdAbar; it.dEdZbar = ion.dEdZbar;
    it.s = ion.entropy; it.dSdRho = ion.dSdRho; it.dSdT = ion.dSdT;
    this.ionDegeneracy = ion.degeneracy;

    const ph = this.photonScratch;
    photonGas(rho, T, ph);
    const pt = this.photons;
    pt.P = ph.pressure; pt.dPdRho = ph.dPdRho; pt.dPdT = ph.dPdT; pt.dPdAbar = 0; pt.dPdZbar = 0;
    pt.e = ph.energy; pt.dEdRho = ph.dEdRho; pt.dEdT = ph.dEdT; pt.dEdAbar = 0; pt.dEdZbar = 0;
    pt.s = ph.entropy; pt.dSdRho = ph.dSdRho; pt.dSdT = ph.dSdT;

    const co = this.coulombScratch;
    coulombCorrection(rho, T, abar, zbar, mixture, row, co);
    const ct = this.coulomb;
    ct.P = co.pressure; ct.dPdRho = co.dPdRho; ct.dPdT = co.dPdT; ct.dPdAbar = co.dPdAbar; ct.dPdZbar = co.dPdZbar;
    ct.e = co.energy; ct.dEdRho = co.dEdRho; ct.dEdT = co.dEdT; ct.dEdAbar = co.dEdAbar; ct.dEdZbar = co.dEdZbar;
    ct.s = co.entropy; ct.dSdRho = co.dSdRho; ct.dSdT = co.dSdT;
    this.coulombGamma = co.gamma;

    const tot = this.total;
    zeroTerms(tot);
    if (inc.electrons) addTerms(tot, this.electrons);
    if (inc.positrons) addTerms(tot, this.positrons);
    if (inc.ions) addTerms(tot, it);
    if (inc.photons) addTerms(tot, pt);
    if (inc.coulomb) addTerms(tot, ct);
    return STATUS.OK;
  }

  /** Warning flags for the point just computed. */
  warnings(rho: number, T: number, abar: number, zmax: number): number {
    const tot = this.total;
    let w = 0;
    if (partialIonizationLikely(rho, T, abar, zmax)) w |= WARNING.PARTIAL_IONIZATION;
    if (rho > NEUTRON_DRIP_DENSITY) w |= WARNING.NEUTRON_DRIP;
    if (this.coulombGamma > GAMMA_MELT) w |= WARNING.CRYSTALLIZED;
    if (!(tot.P > 0)) w |= WARNING.NON_POSITIVE_PRESSURE;
    const cs2 = tot.dPdRho + (T * tot.dPdT * tot.dPdT) / (rho * rho * tot.dEdT);
    if (!(tot.dPdRho > 0) || !(cs2 > 0)) w |= WARNING.MECHANICALLY_UNSTABLE;
    if (this.include.ions && this.ionDegeneracy >= 1) w |= WARNING.QUANTUM_IONS;
    return w;
  }
}

// ---------------------------------------------------------------------------------------------
// Batch evaluation
// ---------------------------------------------------------------------------------------------

/** Status of a density value (STATUS.OK inside the domain); no allocation. */
export function densityStatus(rho: number): number {
  if (Number.isNaN(rho) || !Number.isFinite(rho)) return STATUS.INVALID_NUMBER;
  if (rho <= 0) return STATUS.DENSITY_NOT_POSITIVE;
  if (rho < DENSITY_MIN || rho > DENSITY_MAX) return STATUS.DENSITY_OUT_OF_RANGE;
  return STATUS.OK;
}

/** What is wrong with a density value (call only when densityStatus is not OK). */
export function densityMessage(rho: number): string {
  const st = densityStatus(rho);
  if (st === STATUS.INVALID_NUMBER) return `density is ${rho}; give a finite number in g/cm³`;
  if (st === STATUS.DENSITY_NOT_POSITIVE) return `density is ${rho} g/cm³; it must be positive`;
  if (st === STATUS.DENSITY_OUT_OF_RANGE) return `density ${rho} g/cm³ is outside the domain [${DENSITY_MIN}, ${DENSITY_MAX}]`;
  return '';
}

/** Status of a temperature value (STATUS.OK inside the domain); no allocation. */
export function temperatureStatus(T: number): number {
  if (Number.isNaN(T) || !Number.isFinite(T)) return STATUS.INVALID_NUMBER;
  if (T < TEMPERATURE_MIN || T > TEMPERATURE_MAX) return STATUS.TEMPERATURE_OUT_OF_RANGE;
  return STATUS.OK;
}

/** What is wrong with a temperature value (call only when temperatureStatus is not OK). */
export function temperatureMessage(T: number): string {
  const st = temperatureStatus(T);
  if (st === STATUS.INVALID_NUMBER) return `temperature is ${T}; give a finite number in K`;
  if (st === STATUS.TEMPERATURE_OUT_OF_RANGE) return `temperature ${T} K is outside the domain [${TEMPERATURE_MIN}, ${TEMPERATURE_MAX}]`;
  return '';
}

export function compositionStatus(comp: ResolvedComposition, i: number): number {
  const r = comp.reason[i];
  if (r === COMPOSITION_OUT_OF_DOMAIN) return STATUS.COMPOSITION_OUT_OF_DOMAIN;
  if (r === COMPOSITION_BAD_FRACTIONS) return STATUS.MASS_FRACTIONS_INVALID;
  return STATUS.OK;
}

export function checkMethod(options: EvaluateOptions | undefined): void {
  const method = options?.method ?? 'exact';
  if (method === 'table') {
    const t = options?.table;
    if (!t || typeof t !== 'object' || !t.columns || !t.grid) {
      throw new Error('method "table" is not available without a table: pass options.table (a free-energy table built by eos/free-energy-table.ts), or use method "exact"');
    }
    if (!t.packed) prepareTable(t);
  } else if (method !== 'exact') throw new Error(`unknown method "${String(method)}"; use "exact" or "table"`);
  const cs = options?.soundSpeed ?? 'newtonian';
  if (cs !== 'newtonian' && cs !== 'relativistic') {
    throw new Error(`unknown soundSpeed "${String(cs)}"; use "newtonian" or "relativistic"`);
  }
}

/**
 * Allocate an empty result of n points (status OK; columns zero until stored, and set to NaN by
 * failPoint for a failed point, which is cheaper than pre-filling every column with NaN).
 */
export function allocateResult(n: number, included: readonly ComponentName[], maxwell: boolean, breakdown = true): EvaluateResult {
  // one buffer for every column (a single allocation instead of ~80)
  const count = TOTAL_COLUMNS.length + (breakdown ? COMPONENT_NAMES.length * COMPONENT_COLUMNS.length : 0) + 5 + (maxwell ? 3 : 0);
  const buffer = new Float64Array(count * n);
  let next = 0;
  const col = () => buffer.subarray(n * next, n * ++next);
  const empty = new Float64Array(0);
  const ccol = breakdown ? col : () => empty;
  const comp = (): ComponentColumns => ({
    pressure: ccol(), specificEnergy: ccol(), specificEntropy: ccol(), dPdRho: ccol(), dPdT: ccol(),
    dEdRho: ccol(), dEdT: ccol(), dSdRho: ccol(), dSdT: ccol(),
  });
  // An object literal with every property (not added one by one), so that it keeps a fast shape.
  const r: EvaluateResult = {
    n,
    method: 'exact',
    constantsSet: CONSTANTS_SET,
    included,
    components: { electrons: comp(), positrons: comp(), ions: comp(), photons: comp(), coulomb: comp() },
    breakdown,
    density: col(), temperature: col(), abar: col(), zbar: col(), ye: col(),
    pressure: col(), specificEnergy: col(), specificEntropy: col(), dPdRho: col(), dPdT: col(), dEdRho: col(),
    dEdT: col(), dSdRho: col(), dSdT: col(), dPdAbar: col(), dPdZbar: col(), dEdAbar: col(), dEdZbar: col(),
    cv: col(), cp: col(), gamma1: col(), gamma3: col(), chiRho: col(), chiT: col(), nablaAd: col(),
    soundSpeed: col(), eta: col(), electronDensity: col(), positronDensity: col(), coulombGamma: col(),
    radiationPressureFraction: col(),
    status: new Uint8Array(n),
    messages: new Array<string>(n).fill(''),
    warnings: new Uint8Array(n),
    maxwell: maxwell ? { energy: col(), entropyT: col(), entropyRho: col() } : undefined,
  };
  return r;
}

function storeComponent(c: ComponentColumns, t: Terms, i: number): void {
  c.pressure[i] = t.P;
  c.specificEnergy[i] = t.e;
  c.specificEntropy[i] = t.s;
  c.dPdRho[i] = t.dPdRho;
  c.dPdT[i] = t.dPdT;
  c.dEdRho[i] = t.dEdRho;
  c.dEdT[i] = t.dEdT;
  c.dSdRho[i] = t.dSdRho;
  c.dSdT[i] = t.dSdT;
}

/**
 * Store the kernel's current point into row i of the result (totals, components, derived
 * quantities, warnings). The result's density/temperature/abar/zbar/ye columns must be set.
 */
export function storePoint(res: EvaluateResult, i: number, k: PointKernel, zmax: number, relativistic: boolean): void {
  const rho = res.density[i];
  const T = res.temperature[i];
  const tot = k.total;
  res.pressure[i] = tot.P;
  res.specificEnergy[i] = tot.e;
  res.specificEntropy[i] = tot.s;
  res.dPdRho[i] = tot.dPdRho;
  res.dPdT[i] = tot.dPdT;
  res.dEdRho[i] = tot.dEdRho;
  res.dEdT[i] = tot.dEdT;
  res.dSdRho[i] = tot.dSdRho;
  res.dSdT[i] = tot.dSdT;
  res.dPdAbar[i] = tot.dPdAbar;
  res.dPdZbar[i] = tot.dPdZbar;
  res.dEdAbar[i] = tot.dEdAbar;
  res.dEdZbar[i] = tot.dEdZbar;
  const cv = tot.dEdT;
  const P = tot.P;
  const g3m1 = tot.dPdT / (rho * cv);
  // Γ1 P = ρ ∂P/∂ρ + T (∂P/∂T)²/(ρ c_v): finite even where P ≤ 0 (flagged).
  const g1P = rho * tot.dPdRho + (T * tot.dPdT * tot.dPdT) / (rho * cv);
  const chiRho = (rho * tot.dPdRho) / P;
  const chiT = (T * tot.dPdT) / P;
  const g1 = g1P / P;
  res.cv[i] = cv;
  res.chiRho[i] = chiRho;
  res.chiT[i] = chiT;
  res.gamma3[i] = 1 + g3m1;
  res.gamma1[i] = g1;
  res.nablaAd[i] = g3m1 / g1;
  res.cp[i] = (cv * g1P) / (rho * tot.dPdRho);
  let cs2 = g1P / rho;
  if (relativistic) cs2 = cs2 / (1 + (tot.e + P / rho) / (SPEED_OF_LIGHT * SPEED_OF_LIGHT));
  res.soundSpeed[i] = cs2 > 0 ? Math.sqrt(cs2) : 0;
  res.eta[i] = k.pair.eta;
  res.electronDensity[i] = k.pair.electronDensity;
  res.positronDensity[i] = k.pair.positronDensity;
  res.coulombGamma[i] = k.coulombGamma;
  res.radiationPressureFraction[i] = k.include.photons ? k.photons.P / P : 0;
  const inc = k.include;
  if (res.breakdown) {
    storeComponent(res.components.electrons, inc.electrons ? k.electrons : ZERO_TERMS, i);
    storeComponent(res.components.positrons, inc.positrons ? k.positrons : ZERO_TERMS, i);
    storeComponent(res.components.ions, inc.ions ? k.ions : ZERO_TERMS, i);
    storeComponent(res.components.photons, inc.photons ? k.photons : ZERO_TERMS, i);
    storeComponent(res.components.coulomb, inc.coulomb ? k.coulomb : ZERO_TERMS, i);
  }
  res.warnings[i] = k.warnings(rho, T, res.abar[i], zmax);
  if (res.maxwell) storeMaxwellResiduals(res.maxwell, i, rho, T, tot.P, tot.dPdT, tot.dEdRho, tot.dEdT, tot.dSdRho, tot.dSdT);
}

/**
 * The three Maxwell residuals of point i, each divided by the sum of the magnitudes of its terms:
 * ρ²∂e/∂ρ = P − T∂P/∂T, ∂s/∂T = (1/T)∂e/∂T, ∂s/∂ρ = −(1/ρ²)∂P/∂T.
 */
export function storeMaxwellResiduals(mx: MaxwellResidualColumns, i: number, rho: number, T: number, P: number, dPdT: number,
  dEdRho: number, dEdT: number, dSdRho: number, dSdT: number): void {
  const a = rho * rho * dEdRho;
  const b = P - T * dPdT;
  mx.energy[i] = (a - b) / (Math.abs(a) + Math.abs(P) + Math.abs(T * dPdT));
  const c1 = dSdT;
  const c2 = dEdT / T;
  mx.entropyT[i] = (c1 - c2) / (Math.abs(c1) + Math.abs(c2));
  const d1 = dSdRho;
  const d2 = -dPdT / (rho * rho);
  mx.entropyRho[i] = (d1 - d2) / (Math.abs(d1) + Math.abs(d2));
}

/**
 * Gives point i its status and message when its density, temperature or composition is not
 * accepted (checked in that order) and says whether it did; every method checks its inputs so.
 */
function failedInput(res: EvaluateResult, i: number, rho: number, T: number, comp: ResolvedComposition): boolean {
  let st = densityStatus(rho);
  if (st !== STATUS.OK) {
    failPoint(res, i, st, densityMessage(rho));
    return true;
  }
  st = temperatureStatus(T);
  if (st !== STATUS.OK) {
    failPoint(res, i, st, temperatureMessage(T));
    return true;
  }
  st = compositionStatus(comp, i);
  if (st !== STATUS.OK) {
    failPoint(res, i, st, comp.messages[i]);
    return true;
  }
  return false;
}

const ZERO_TERMS: Terms = newTerms();

/** Mark row i as failed: NaN in every output column, status and message. */
export function failPoint(res: EvaluateResult, i: number, status: number, message: string): void {
  res.status[i] = status;
  res.messages[i] = message;
  res.warnings[i] = 0;
  for (const k of TOTAL_COLUMNS) res[k][i] = NaN;
  if (res.breakdown) for (const c of COMPONENT_NAMES) for (const k of COMPONENT_COLUMNS) res.components[c][k][i] = NaN;
  if (res.maxwell) res.maxwell.energy[i] = res.maxwell.entropyT[i] = res.maxwell.entropyRho[i] = NaN;
}

/** Parse the common inputs: the broadcast length and the resolved composition. */
export function prepareComposition(input: CompositionInput, extra: ReadonlyArray<readonly [string, Column]>): {
  n: number;
  comp: ResolvedComposition;
} {
  const cols: Array<readonly [string, Column]> = [...extra];
  if ('nuclides' in input && Array.isArray(input.nuclides)) {
    input.nuclides.forEach((nu, j) => {
      if (nu && typeof nu === 'object' && nu.massFraction !== undefined) cols.push([`nuclides[${j}].massFraction`, nu.massFraction]);
    });
  } else {
    const mi = input as { abar?: Column; zbar?: Column };
    if (mi.abar === undefined || mi.zbar === undefined) throw new Error('composition must give both abar and zbar, or a nuclides list');
    cols.push(['abar', mi.abar], ['zbar', mi.zbar]);
  }
  for (const [name, c] of cols) {
    if (c === undefined || c === null) throw new Error(`${name} is missing`);
    if (typeof c !== 'number' && typeof (c as ArrayLike<number>).length !== 'number') {
      throw new Error(`${name} must be a number or an array of numbers`);
    }
  }
  const n = broadcastLength(cols);
  return { n, comp: resolveComposition(input, n) };
}

/**
 * Evaluate the equation of state at every point of the input (numbers and array-likes are
 * broadcast against each other). See the module comment for units and conventions.
 */
export function evaluate(input: StateInput, options: EvaluateOptions = {}): EvaluateResult {
  if (input === null || typeof input !== 'object') throw new Error('evaluate needs { density, temperature, abar, zbar } or { density, temperature, nuclides }');
  checkMethod(options);
  const inc = includeFlags(options.components);
  const included = COMPONENT_NAMES.filter((c) => inc[c]);
  if (input.density === undefined) throw new Error('density is missing');
  if (input.temperature === undefined) throw new Error('temperature is missing');
  const { n, comp } = prepareComposition(input, [['density', input.density], ['temperature', input.temperature]]);
  const rhoCol = readFloat64Column(input.density, n, 'density');
  const tCol = readFloat64Column(input.temperature, n, 'temperature');
  const res = reuseOrAllocate(options.into, n, included, options.maxwellResiduals === true, options.breakdown !== false);
  res.density.set(rhoCol);
  res.temperature.set(tCol);
  res.abar.set(comp.abar);
  res.zbar.set(comp.zbar);
  res.ye.set(comp.ye);
  const mixture = mixtureOf(comp);
  const relativistic = options.soundSpeed === 'relativistic';
  if (options.method === 'table') {
    res.method = 'table';
    evaluateTableBatch(res, rhoCol, tCol, comp, mixture, inc, options.table!, relativistic);
    return res;
  }
  res.method = 'exact';
  const kernel = new PointKernel(inc, null);
  for (let i = 0; i < n; i++) {
    const rho = rhoCol[i];
    const T = tCol[i];
    if (failedInput(res, i, rho, T, comp)) continue;
    const st = kernel.compute(rho, T, comp.abar[i], comp.zbar[i], mixture, i);
    if (st !== STATUS.OK) {
      failPoint(res, i, st, `the electron–positron neutrality solve failed at density ${rho} g/cm³, temperature ${T} K, Ye ${comp.ye[i]}`);
      continue;
    }
    storePoint(res, i, kernel, comp.zmax[i], relativistic);
  }
  return res;
}

/** options.into checked and reset, or a fresh result. */
function reuseOrAllocate(into: EvaluateResult | undefined, n: number, included: readonly ComponentName[], maxwell: boolean, breakdown: boolean): EvaluateResult {
  if (into === undefined) return allocateResult(n, included, maxwell, breakdown);
  if (!into || typeof into !== 'object' || into.n !== n || !(into.pressure instanceof Float64Array) || into.pressure.length !== n || (into.maxwell !== undefined) !== maxwell || into.breakdown !== breakdown) {
    throw new Error(`options.into must be a result of evaluate with the same number of points (${n}) and the same maxwellResiduals and breakdown settings`);
  }
  into.included = included;
  into.status.fill(0);
  into.warnings.fill(0);
  into.messages.fill('');
  return into;
}

/** Message of a point outside the table's grid. */
function tableOutsideMessage(table: FreeEnergyTable, rho: number, ye: number, T: number): string {
  const g = table.grid;
  return `ρ·Ye = ${(rho * ye).toExponential(4)} g/cm³, T = ${T} K is outside the table grid (log10 ρYe ∈ [${g.logDensityYeMin}, ${g.logDensityYeMax}], log10 T ∈ [${g.logTemperatureMin}, ${g.logTemperatureMax}]); not extrapolated`;
}


/** This thread's instance of the WebAssembly table loop (created on first use). */
let tableBatch: TableBatch | null = null;

export function tableBatchEngine(): TableBatch {
  tableBatch ??= new TableBatch({
    avogadro: AVOGADRO, boltzmannK: BOLTZMANN_K, electronRestEnergy: ELECTRON_REST_ENERGY, radiationA: RADIATION_A,
    ionGasConstant: R_GAS, lnIonQuantumConcentration: LN_QC_UNIT, speedOfLight2: SPEED_OF_LIGHT * SPEED_OF_LIGHT,
    pairZC: PAIR_Z_C, lnKOverMec2: LN_K_OVER_MEC2, lnHalfAvogadro: LN_HALF_AVOGADRO, lnShareFloor: LN_SHARE_FLOOR,
    e2OverK: E2_OVER_K, fourPiOver3Avogadro: FOUR_PI_OVER_3_NA, ocpA3: OCP_A3, invSqrtA2: INV_SQRT_A2, halfLnA2: HALF_LN_A2,
    rydberg: RYDBERG, sahaFactor: PARTIAL_IONIZATION_SAHA_FACTOR, bohrRadius: BOHR_RADIUS,
  });
  return tableBatch;
}

/** The WebAssembly loop's flags for these components and options. */
export function tableBatchFlags(inc: IncludeFlags, relativistic: boolean, breakdown: boolean): number {
  return (inc.electrons ? FLAG.electrons : 0) | (inc.positrons ? FLAG.positrons : 0) | (inc.ions ? FLAG.ions : 0)
    | (inc.photons ? FLAG.photons : 0) | (inc.coulomb ? FLAG.coulomb : 0) | (relativistic ? FLAG.relativistic : 0)
    | (breakdown ? FLAG.breakdown : 0);
}

/** dst[at..at + n) = src[from..from + n) (an element loop for small batches: a subarray view costs more). */
function copyColumn(dst: Float64Array, at: number, src: Float64Array, from: number, n: number): void {
  if (n <= 16) for (let i = 0; i < n; i++) dst[at + i] = src[from + i];
  else dst.set(src.subarray(from, from + n), at);
}

/**
 * Points per call of the WebAssembly loop. Its outputs (≤ 71 columns, 291 KB for 512 points) stay
 * in the core's L2 cache until they are copied into the result; much larger chunks measured slower
 * with the breakdown on (32 768: ~1.2–1.6 µs a point against ~0.7–1.1 µs for 128–256, a noisy
 * machine), much smaller ones pay a typed-array view per column per chunk.
 */
const TABLE_CHUNK = 512;

/**
 * evaluate() for method "table": the whole per-point loop runs in WebAssembly (eos/wasm/: the
 * formulas of tablePairGas, ions.ts, radiation.ts, coulomb.ts and storePoint, in the same order as
 * PointKernel + storePoint, which tests/eos/free-energy-table.test.ts compares it with); here the
 * columns are copied in and out chunk by chunk, points the loop could not compute get their status
 * and message in the same order of checks as the exact method, and the Maxwell residuals are formed.
 */
function evaluateTableBatch(
  res: EvaluateResult, rhoCol: Float64Array, tCol: Float64Array, comp: ResolvedComposition, mixture: MixtureData | null,
  inc: IncludeFlags, table: FreeEnergyTable, relativistic: boolean,
): void {
  const n = res.n;
  const flags = tableBatchFlags(inc, relativistic, res.breakdown);
  const engine = tableBatchEngine();
  const columns = [rhoCol, tCol, comp.abar, comp.zbar, comp.zmax];
  const reason = comp.reason;
  for (let from = 0; from < n; from += TABLE_CHUNK) {
    const m = Math.min(TABLE_CHUNK, n - from);
    const out = engine.run(table, from, m, columns, flags, mixture);
    const v = out.values, at = out.valuesAt, stride = out.stride;
    for (let k = 0; k < OUTPUT_COLUMNS.length; k++) copyColumn(res[OUTPUT_COLUMNS[k]], from, v, at + k * stride, m);
    if (res.breakdown) {
      let k = OUTPUT_COLUMNS.length;
      for (const c of COMPONENT_NAMES) for (const q of OUTPUT_COMPONENT_COLUMNS) copyColumn(res.components[c][q], from, v, at + stride * k++, m);
    }
    const bytes = out.bytes, w = out.warningsAt, st = out.statusAt;
    for (let j = 0; j < m; j++) res.warnings[from + j] = bytes[w + j];
    for (let j = 0; j < m; j++) {
      const i = from + j;
      const code = bytes[st + j];
      if (code === 0 && reason[i] === 0) continue;
      const rho = rhoCol[i], T = tCol[i];
      if (!failedInput(res, i, rho, T, comp) && code === 2) failPoint(res, i, STATUS.TABLE_OUT_OF_RANGE, tableOutsideMessage(table, rho, comp.ye[i], T));
    }
  }
  const mx = res.maxwell;
  if (mx) {
    for (let i = 0; i < n; i++) {
      if (res.status[i] !== STATUS.OK) continue;
      storeMaxwellResiduals(mx, i, rhoCol[i], tCol[i], res.pressure[i], res.dPdT[i], res.dEdRho[i], res.dEdT[i], res.dSdRho[i], res.dSdT[i]);
    }
  }
}

/** Plain-words description of the warnings of point i, with the numbers behind them. */
export function describeWarnings(res: EvaluateResult, i: number): string[] {
  const w = res.warnings[i];
  const out: string[] = [];
  const rho = res.density[i];
  const T = res.temperature[i];
  const fmt = (x: number) => x.toPrecision(3);
  if (w & WARNING.PARTIAL_IONIZATION) {
    out.push(`likely partial ionization: at T = ${fmt(T)} K and ρ = ${fmt(rho)} g/cm³ the innermost electrons are neither thermally nor pressure ionized; the fully ionized model is doubtful`);
  }
  if (w & WARNING.NEUTRON_DRIP) {
    out.push(`beyond neutron drip: ρ = ${fmt(rho)} g/cm³ > ${fmt(NEUTRON_DRIP_DENSITY)} g/cm³; free neutrons and nuclear physics are not included`);
  }
  if (w & WARNING.CRYSTALLIZED) {
    out.push(`crystallized ions: Coulomb coupling Γ = ${fmt(res.coulombGamma[i])} > Γ_m = ${GAMMA_MELT}; the liquid Coulomb fit is extrapolated and lattice terms are not included`);
  }
  if (w & WARNING.NON_POSITIVE_PRESSURE) {
    const coulomb = res.breakdown ? ` (${fmt(res.components.coulomb.pressure[i])} erg/cm³)` : '';
    out.push(`non-positive total pressure P = ${fmt(res.pressure[i])} erg/cm³: the Coulomb correction${coulomb} outweighs the ideal gases; the model does not apply here`);
  }
  if (w & WARNING.MECHANICALLY_UNSTABLE) {
    out.push(`mechanically unstable: ∂P/∂ρ at fixed T = ${fmt(res.dPdRho[i])} or Γ1 P = ${fmt(res.gamma1[i] * res.pressure[i])} is not positive (Coulomb correction dominates)`);
  }
  if (w & WARNING.QUANTUM_IONS) {
    out.push(`quantum ions: the ion thermal wavelength exceeds the interionic spacing at T = ${fmt(T)} K, ρ = ${fmt(rho)} g/cm³; the classical ion gas is inaccurate`);
  }
  return out;
}
