/**
 * Free-energy table of the electron–positron gas and its thermodynamically consistent
 * interpolation: the method of Timmes & Swesty (2000, ApJS 126, 501). Pure computation, no I/O.
 *
 * What is tabulated. The Helmholtz free energy per unit mass of ρYe, f(d, T) = (U − TS)/d with
 * d = ρ·Ye (the pair gas depends on ρ and composition only through d), on a grid uniform in
 * log10 d and (piecewise) log10 T, with the derivatives the biquintic Hermite interpolation needs —
 * f, f_d, f_T, f_dd, f_dT, f_TT, f_ddT, f_dTT, f_ddTT — all analytic from the exact method
 * (pair-gas-second-derivatives.ts; no finite differences). Also η with η_d, η_T, η_dT, η_dd, η_ddT
 * (for η and ∂P/∂d), and the positron n₊, P₊, U₊, S₊ with their d, T and mixed derivatives (bicubic
 * Hermite, for n± and the positron component; they do not enter P, e, s).
 *
 * Interpolation (our variant of the published scheme): the quintic Hermite basis
 * ψ0 = 1 − 10z³ + 15z⁴ − 6z⁵, ψ1 = z − 6z³ + 8z⁴ − 3z⁵, ψ2 = (z² − 3z³ + 3z⁴ − z⁵)/2 in each
 * direction, in the variables u = ln d, v = ln T (rather than d, T). What is interpolated is not f
 * but the better-conditioned H = (f − F0(u) − Δ(u, v))/T (prepareTable derives its node values and
 * derivatives from the stored f columns):
 *   - F0: the zero-temperature electron gas (Chandrasekhar 1939, exact; `coldFreeEnergy`), itself
 *     quintic-Hermite interpolated in u alone. Without it s = −F_v/T was a difference of large F
 *     values (relative error ~1e-16·(T_F/T)², measured up to 6.5e4 at log ρYe 14.8, log T 3.05).
 *     Where kT < 3e-3 E_F the node value of f − f0 (below the rounding of f) comes from the entropy
 *     by the Sommerfeld series σ = aT + bT³: f − f0 = T f_T/2 + T(f_T − T f_TT)/8 + O((kT/E_F)⁴).
 *   - Δ: the pair part of a Boltzmann pair gas (`pairBoltzmann`), which carries the e^{−m_e c²/kT}
 *     growth of the pairs (~e³ per cell at pair onset, where interpolating f erred by up to 0.7).
 *   - /T: the non-degenerate F ∝ T ln(…) becomes nearly linear in v (e medians 1e-8 → 1e-12).
 * Then F = T H + F0 + Δ (F0, Δ and their derivatives added back analytically), P = d F_u,
 * s = −F_v/T (per unit mass of ρYe), e = F − F_v, ∂P/∂T = d F_uv/T,
 * ∂e/∂d = (F_u − F_uv)/d, ∂e/∂T = (F_v − F_vv)/T, ∂s/∂d = −F_uv/(dT), ∂s/∂T = (F_v − F_vv)/T².
 * All come from the one F, so the three Maxwell relations (Timmes & Arnett 1999, ApJS 125, 277) hold
 * to rounding (measured ≤ 4.4e-15). ∂P/∂d|_T is not F_u + F_uu (which cancels to ~(n0/n_pairs)²
 * where pairs dominate) but N_A k T d η_d (Gibbs–Duhem), from ln(d η_d) interpolated bicubically;
 * η and the positron shares of n, P, U, S (as ln(share + 1e-30)) likewise. These bicubic quantities
 * are interpolated as remainders after a Boltzmann pair-gas reference (`boltzmannReference`).
 *
 * Grid: uniform in log10 d; in log10 T uniform in pieces, with a denser band over the pair onset
 * (PAIR_ONSET_BAND: log10 T 8–10 at 60 per decade; `resolveGrid`).
 *
 * Accuracy: measured by `measureErrors` at cell centres and a seeded random sample against the
 * exact method and stored in the table (`table.accuracy`). Default grid, 40 000 random off-grid
 * points, relative max / median: P 9.9e-8 / 1.2e-11, e 4.8e-7 / 4.1e-12, s 3.6e-7 / 5.0e-10,
 * ∂P/∂d 7.0e-5, η 2.6e-5 (before the band and the references: P, e, s up to 1.1e-5, 5.7e-5, 1.6e-5
 * at pair onset; ∂P/∂d up to 1e50); per region in eos/README.md ("Table method").
 */

import { AVOGADRO, BOLTZMANN_K, ELECTRON_MASS, ELECTRON_REST_ENERGY, PLANCK_H, SPEED_OF_LIGHT } from './constants.js';
import { createPairGasState, pairGas, PAIR_OK, type PairGasState } from './electron-positron.js';
import { NODE_ETA, NODE_LENGTH, pairGasNode } from './pair-gas-second-derivatives.js';

export const TABLE_FORMAT = 'fermiwell free-energy table';
/**
 * 2: the kernel interpolates F − F0 − Δ (cold and pair parts analytic); the accuracy report changed.
 * 3: piecewise-uniform T axis (a denser pair-onset band, attributes refined_temperature_*), columns
 *    eta_dd and eta_ddt (∂P/∂d from ln(d η_d)).
 */
export const TABLE_FORMAT_VERSION = 3;

/**
 * A band of log10 T tabulated more densely than the rest of the axis (the pair onset, where the
 * interpolation error of a 20-per-decade axis reached 6.6e-5). Its ends lie on the coarse axis.
 */
export interface TemperatureBand {
  logTemperatureMin: number;
  logTemperatureMax: number;
  pointsPerDecade: number;
}

/**
 * Grid in log10 d (d = ρYe, g/cm³) and log10 T (K); points per decade in each direction. The T axis
 * is uniform except for an optional denser band (`refinedTemperature`): left out (undefined), the
 * builder puts PAIR_ONSET_BAND there (see `resolveGrid`); null asks for a uniform axis.
 */
export interface TableGrid {
  logDensityYeMin: number;
  logDensityYeMax: number;
  logTemperatureMin: number;
  logTemperatureMax: number;
  pointsPerDecadeDensity: number;
  pointsPerDecadeTemperature: number;
  refinedTemperature?: TemperatureBand | null;
}

/**
 * The pair-onset band log10 T ∈ [8, 10] at (at least) 60 points per decade: there the pairs appear
 * and the free energy of the remainder changes fastest in T. Chosen by measurement (eos/README.md,
 * "Table method"): 20 per decade gave up to 6.6e-5 (e), 40 gave ~2e-6, 60 gives ≤ 4e-7.
 */
export const PAIR_ONSET_BAND: Readonly<TemperatureBand> = Object.freeze({ logTemperatureMin: 8, logTemperatureMax: 10, pointsPerDecade: 60 });

export const DEFAULT_TABLE_GRID: Readonly<TableGrid> = Object.freeze({
  logDensityYeMin: -12,
  logDensityYeMax: 15,
  logTemperatureMin: 3,
  logTemperatureMax: 13,
  pointsPerDecadeDensity: 20,
  pointsPerDecadeTemperature: 20,
  refinedTemperature: Object.freeze({ ...PAIR_ONSET_BAND }),
});

const whole = (x: number) => Math.abs(x - Math.round(x)) < 1e-9;

/**
 * The grid with its T band made explicit: `refinedTemperature` undefined becomes PAIR_ONSET_BAND
 * snapped outwards to the coarse axis and clipped to the grid, with pointsPerDecade the smallest
 * multiple of the coarse density ≥ 60 (null when the coarse axis is already that dense or the band
 * misses the grid). Grids that resolve alike describe the same table.
 */
export function resolveGrid(grid: TableGrid): TableGrid & { refinedTemperature: TemperatureBand | null } {
  const { refinedTemperature, ...base } = grid;
  if (refinedTemperature !== undefined) return { ...base, refinedTemperature: refinedTemperature === null ? null : { ...refinedTemperature } };
  const ppd = grid.pointsPerDecadeTemperature;
  const t0 = grid.logTemperatureMin;
  const t1 = grid.logTemperatureMax;
  let band: TemperatureBand | null = null;
  if (Number.isFinite(ppd) && ppd >= 1 && ppd < PAIR_ONSET_BAND.pointsPerDecade) {
    const lo = Math.max(t0, t0 + Math.floor((PAIR_ONSET_BAND.logTemperatureMin - t0) * ppd + 1e-9) / ppd);
    const hi = Math.min(t1, t0 + Math.ceil((PAIR_ONSET_BAND.logTemperatureMax - t0) * ppd - 1e-9) / ppd);
    if (hi > lo + 1e-9) band = { logTemperatureMin: lo, logTemperatureMax: hi, pointsPerDecade: ppd * Math.ceil(PAIR_ONSET_BAND.pointsPerDecade / ppd) };
  }
  return { ...base, refinedTemperature: band };
}

/** The T axis as three uniform pieces: [t0, lo] and [hi, t1] at the coarse density, [lo, hi] at the band's. */
interface TemperatureAxis {
  t0: number; lo: number; hi: number; t1: number; ppd: number; ppdBand: number; nA: number; nB: number; nC: number;
}

function temperatureAxis(grid: TableGrid): TemperatureAxis {
  const band = resolveGrid(grid).refinedTemperature;
  const t0 = grid.logTemperatureMin, t1 = grid.logTemperatureMax, ppd = grid.pointsPerDecadeTemperature;
  if (!band) {
    const nA = Math.round((t1 - t0) * ppd);
    return { t0, lo: t1, hi: t1, t1, ppd, ppdBand: ppd, nA, nB: 0, nC: 0 };
  }
  const lo = band.logTemperatureMin, hi = band.logTemperatureMax;
  return {
    t0, lo, hi, t1, ppd, ppdBand: band.pointsPerDecade,
    nA: Math.round((lo - t0) * ppd), nB: Math.round((hi - lo) * band.pointsPerDecade), nC: Math.round((t1 - hi) * ppd),
  };
}

/** Tabulated columns, each nD·nT values, index i·nT + j (i along d, j along T). Physical (d, T) derivatives. */
export const TABLE_COLUMNS = [
  'free_energy', 'free_energy_d', 'free_energy_t', 'free_energy_dd', 'free_energy_dt', 'free_energy_tt',
  'free_energy_ddt', 'free_energy_dtt', 'free_energy_ddtt',
  'eta', 'eta_d', 'eta_t', 'eta_dt',
  'positron_density', 'positron_density_d', 'positron_density_t', 'positron_density_dt',
  'positron_pressure', 'positron_pressure_d', 'positron_pressure_t', 'positron_pressure_dt',
  'positron_energy', 'positron_energy_d', 'positron_energy_t', 'positron_energy_dt',
  'positron_entropy', 'positron_entropy_d', 'positron_entropy_t', 'positron_entropy_dt',
  'eta_dd', 'eta_ddt',
] as const;
export type TableColumnName = (typeof TABLE_COLUMNS)[number];
/** Number of node values (TABLE_COLUMNS.length); equals the first 31 entries of a pairGasNode output. */
export const TABLE_COLUMN_COUNT = TABLE_COLUMNS.length;

export interface AccuracyStats {
  max: number;
  median: number;
  p99: number;
  /** where the max occurred */
  worstLogDensityYe: number;
  worstLogTemperature: number;
}

export interface AccuracyReport {
  /** relative errors |table − exact|/|exact| (eta: |Δη|/max(1, |η|)) */
  quantities: Record<string, AccuracyStats>;
  cellCentres: number;
  randomPoints: number;
  seed: number;
  /** Maxwell residuals in table mode (normalized as in state.ts), max over the same points */
  maxwellMax: number;
}

export interface FreeEnergyTable {
  format: string;
  formatVersion: number;
  modelVersion: string;
  constantsSet: string;
  grid: TableGrid;
  nD: number;
  nT: number;
  columns: Record<TableColumnName, Float64Array>;
  accuracy: AccuracyReport | null;
  build: { builtAt: string; seconds: number; workers: number; builder: string };
  /** Kernel data derived from the columns by `prepareTable` (not stored in files). */
  packed?: Float64Array;
  /** Per density node: the T = 0 free energy F0, F0_x, F0_xx (x = u/h_u; prepareTable; not stored in files). */
  packedCold?: Float64Array;
  /** The piecewise-uniform ln T axis for the kernel's cell search (prepareTable; not stored in files). */
  packedAxis?: Float64Array;
}

export function gridSize(grid: TableGrid): { nD: number; nT: number } {
  const nD = Math.round((grid.logDensityYeMax - grid.logDensityYeMin) * grid.pointsPerDecadeDensity) + 1;
  const ax = temperatureAxis(grid);
  return { nD, nT: ax.nA + ax.nB + ax.nC + 1 };
}

export function validateGrid(grid: TableGrid): void {
  const { refinedTemperature, ...base } = grid;
  const vals = Object.values(base);
  if (vals.some((v) => typeof v !== 'number' || !Number.isFinite(v))) throw new Error('table grid: every bound and density must be a finite number');
  if (!(grid.logDensityYeMax > grid.logDensityYeMin) || !(grid.logTemperatureMax > grid.logTemperatureMin)) throw new Error('table grid: max must exceed min');
  if (!(grid.pointsPerDecadeDensity >= 1) || !(grid.pointsPerDecadeTemperature >= 1)) throw new Error('table grid: at least 1 point per decade');
  if (!whole((grid.logDensityYeMax - grid.logDensityYeMin) * grid.pointsPerDecadeDensity) || !whole((grid.logTemperatureMax - grid.logTemperatureMin) * grid.pointsPerDecadeTemperature)) {
    throw new Error('table grid: the ranges must be whole multiples of the spacing 1/pointsPerDecade');
  }
  if (grid.logTemperatureMin < 3 - 1e-12 || grid.logTemperatureMax > 13 + 1e-12) throw new Error('table grid: log10 T must lie in [3, 13]');
  if (grid.logDensityYeMin < -15 - 1e-12 || grid.logDensityYeMax > 15 + 1e-12) throw new Error('table grid: log10 ρYe must lie in [-15, 15]');
  if (refinedTemperature !== undefined && refinedTemperature !== null) {
    const b = refinedTemperature;
    if (typeof b !== 'object' || ![b.logTemperatureMin, b.logTemperatureMax, b.pointsPerDecade].every((v) => typeof v === 'number' && Number.isFinite(v))) {
      throw new Error('table grid: refinedTemperature needs finite logTemperatureMin, logTemperatureMax and pointsPerDecade (or null for a uniform axis)');
    }
    if (!(b.logTemperatureMin >= grid.logTemperatureMin - 1e-12 && b.logTemperatureMax <= grid.logTemperatureMax + 1e-12 && b.logTemperatureMax > b.logTemperatureMin)) {
      throw new Error('table grid: refinedTemperature must be a non-empty band inside [logTemperatureMin, logTemperatureMax]');
    }
    if (!(b.pointsPerDecade >= grid.pointsPerDecadeTemperature)) throw new Error('table grid: refinedTemperature.pointsPerDecade must be at least pointsPerDecadeTemperature');
    if (!whole((b.logTemperatureMin - grid.logTemperatureMin) * grid.pointsPerDecadeTemperature) || !whole((b.logTemperatureMax - grid.logTemperatureMin) * grid.pointsPerDecadeTemperature)) {
      throw new Error('table grid: the ends of refinedTemperature must be nodes of the coarse T axis');
    }
    if (!whole((b.logTemperatureMax - b.logTemperatureMin) * b.pointsPerDecade)) throw new Error('table grid: refinedTemperature must span a whole number of its spacings');
  }
}

export function nodeLogDensityYe(grid: TableGrid, i: number): number {
  return grid.logDensityYeMin + i / grid.pointsPerDecadeDensity;
}
/** log10 T of node j (fractional j: linear within a cell, e.g. j + 0.5 is a cell centre). */
export function nodeLogTemperature(grid: TableGrid, j: number): number {
  const ax = temperatureAxis(grid);
  if (j <= ax.nA) return ax.t0 + j / ax.ppd;
  if (j <= ax.nA + ax.nB) return ax.lo + (j - ax.nA) / ax.ppdBand;
  return ax.hi + (j - ax.nA - ax.nB) / ax.ppd;
}

const nodeScratch = new Float64Array(NODE_LENGTH);

/**
 * Computes rows iStart ≤ i < iEnd (density index) of the table into `out` (TABLE_COLUMN_COUNT
 * values per node, node-major: out[((i − iStart)·nT + j)·29 + c]). Returns the number of nodes whose
 * pair-gas solve failed (their values are NaN). Used by the builder's workers.
 */
export function computeTableRows(grid: TableGrid, iStart: number, iEnd: number, out: Float64Array, onRow?: (i: number) => void): number {
  const { nT } = gridSize(grid);
  let failed = 0;
  for (let i = iStart; i < iEnd; i++) {
    const d = 10 ** nodeLogDensityYe(grid, i);
    let guess: number | undefined;
    for (let j = 0; j < nT; j++) {
      const T = 10 ** nodeLogTemperature(grid, j);
      const st = pairGasNode(d, T, nodeScratch, guess);
      if (st !== PAIR_OK) failed++;
      guess = st === PAIR_OK ? nodeScratch[NODE_ETA] : undefined;
      const o = ((i - iStart) * nT + j) * TABLE_COLUMN_COUNT;
      for (let c = 0; c < TABLE_COLUMN_COUNT; c++) out[o + c] = nodeScratch[c];
    }
    onRow?.(i);
  }
  return failed;
}

/** Assemble a table from node-major values (all rows). */
export function assembleTable(
  grid: TableGrid, nodeValues: Float64Array, meta: { modelVersion: string; constantsSet: string; seconds: number; workers: number },
): FreeEnergyTable {
  validateGrid(grid);
  const { nD, nT } = gridSize(grid);
  const n = nD * nT;
  const columns = {} as Record<TableColumnName, Float64Array>;
  TABLE_COLUMNS.forEach((name, c) => {
    const col = new Float64Array(n);
    for (let k = 0; k < n; k++) col[k] = nodeValues[k * TABLE_COLUMN_COUNT + c];
    columns[name] = col;
  });
  const table: FreeEnergyTable = {
    format: TABLE_FORMAT,
    formatVersion: TABLE_FORMAT_VERSION,
    modelVersion: meta.modelVersion,
    constantsSet: meta.constantsSet,
    grid: resolveGrid(grid),
    nD,
    nT,
    columns,
    accuracy: null,
    build: { builtAt: new Date().toISOString(), seconds: meta.seconds, workers: meta.workers, builder: 'eos/free-energy-table.ts' },
  };
  prepareTable(table);
  return table;
}

/** Build a whole table in this thread (tests, small grids). The CLI splits rows across workers. */
export function buildFreeEnergyTable(
  grid: TableGrid = DEFAULT_TABLE_GRID, meta: { modelVersion: string; constantsSet: string }, accuracy: { randomPoints?: number; seed?: number; cellCentres?: boolean } = {},
): FreeEnergyTable {
  validateGrid(grid);
  const t0 = Date.now();
  const { nD, nT } = gridSize(grid);
  const values = new Float64Array(nD * nT * TABLE_COLUMN_COUNT);
  const failed = computeTableRows(grid, 0, nD, values);
  if (failed > 0) throw new Error(`table build: the pair-gas solve failed at ${failed} nodes`);
  const table = assembleTable(grid, values, { ...meta, seconds: (Date.now() - t0) / 1000, workers: 1 });
  const pts = accuracySamplePoints(grid, accuracy.randomPoints ?? 2000, accuracy.seed ?? 20000501, accuracy.cellCentres ?? true);
  table.accuracy = summarizeAccuracy(measureErrors(table, pts), pts, accuracy.seed ?? 20000501, pts.cellCentres);
  table.build.seconds = (Date.now() - t0) / 1000;
  return table;
}

// ---------------------------------------------------------------------------------------------
// Kernel data

/** Values per node in the packed kernel array. */
const STRIDE = 33;
const SHARE_FLOOR = 1e-30;
export const LN_SHARE_FLOOR = Math.log(SHARE_FLOOR);

/**
 * Derives the kernel's packed array from the columns (call after loading a table from a file;
 * assembleTable calls it). Layout per node: 9 values of H = (f − F0 − Δ)/T (H, H_x, H_v, H_xx, H_xv,
 * H_vv, H_xxv, H_xvv, H_xxvv with x = u/h_u, v = ln T unscaled: the T axis is only piecewise uniform,
 * so the kernel scales by the cell's h_v), then for the bicubic quantities, each as (R, R_x, R_v,
 * R_xv), remainders after the Boltzmann reference of `boltzmannReference`: η − η_B;
 * ln(d η_d) − ln(d η_d)_B (∂P/∂d = N_A k T d η_d, Gibbs–Duhem); for the positron shares of n
 * (relative to d N_A), P, U, S: ln(share + 1e-30) − ln(share_B + 1e-30).
 */
export function prepareTable(table: FreeEnergyTable): FreeEnergyTable {
  const { nD, nT, grid, columns: c } = table;
  const hu = Math.LN10 / grid.pointsPerDecadeDensity;
  const packed = new Float64Array(nD * nT * STRIDE);
  const packedCold = new Float64Array(nD * 3);
  const cold = new Float64Array(4);
  const pairPart = new Float64Array(9);
  const ref = new Float64Array(REF_LENGTH);
  const tNodes = new Float64Array(nT);
  for (let j = 0; j < nT; j++) tNodes[j] = 10 ** nodeLogTemperature(grid, j);
  for (let i = 0; i < nD; i++) {
    const d = 10 ** nodeLogDensityYe(grid, i);
    coldFreeEnergy(d, cold);
    const F0 = cold[0], F0u = cold[1], F0uu = cold[2], EF = cold[3];
    packedCold[3 * i] = F0;
    packedCold[3 * i + 1] = F0u * hu;
    packedCold[3 * i + 2] = F0uu * hu * hu;
    for (let j = 0; j < nT; j++) {
      const T = tNodes[j];
      const k = i * nT + j;
      const o = k * STRIDE;
      const f = c.free_energy[k], fd = c.free_energy_d[k], ft = c.free_energy_t[k], fdd = c.free_energy_dd[k];
      const fdt = c.free_energy_dt[k], ftt = c.free_energy_tt[k], fddt = c.free_energy_ddt[k], fdtt = c.free_energy_dtt[k];
      const fddtt = c.free_energy_ddtt[k];
      // F(u, v) and its derivatives in u = ln d, v = ln T
      const Fu = d * fd, Fv = T * ft, Fuu = d * d * fdd + d * fd, Fuv = d * T * fdt, Fvv = T * T * ftt + T * ft;
      const Fuuv = T * (d * d * fddt + d * fdt), Fuvv = d * (T * T * fdtt + T * fdt);
      const Fuuvv = d * d * T * T * fddtt + d * d * T * fddt + d * T * T * fdtt + d * T * fdt;
      // The interpolated function is the thermal part G = F − F0(u). Where the gas is strongly
      // degenerate (kT < SOMMERFELD_SWITCH·E_F) f − f0 is below the rounding of f, so G, G_u, G_uu
      // come from the entropy through the Sommerfeld series σ = aT + bT³ (odd in T at fixed d):
      // G = −∫₀ᵀ σ dT' = T f_T/2 + T (f_T − T f_TT)/8 + O((kT/E_F)⁴ G), and its d-derivatives alike.
      let G: number, Gu: number, Guu: number;
      if (BOLTZMANN_K * T < SOMMERFELD_SWITCH * EF) {
        const A = T * ft, B = T * (ft - T * ftt); // G = A/2 + B/8
        const Au = d * T * fdt, Bu = d * T * (fdt - T * fdtt);
        const Auu = T * (d * fdt + d * d * fddt), Buu = T * (d * fdt + d * d * fddt - T * (d * fdtt + d * d * fddtt));
        G = 0.5 * A + 0.125 * B;
        Gu = 0.5 * Au + 0.125 * Bu;
        Guu = 0.5 * Auu + 0.125 * Buu;
      } else {
        G = f - F0;
        Gu = Fu - F0u;
        Guu = Fuu - F0uu;
      }
      if (!pairBoltzmann(d, T, pairPart)) pairPart.fill(0);
      const D = pairPart;
      // interpolated: H = (G − Δ)/T, derivatives in (u, v) from those of K = G − Δ
      const it = 1 / T;
      const K0 = G - D[0], Ku = Gu - D[1], Kv = Fv - D[2], Kuu = Guu - D[3], Kuv = Fuv - D[4], Kvv = Fvv - D[5];
      const Kuuv = Fuuv - D[6], Kuvv = Fuvv - D[7], Kuuvv = Fuuvv - D[8];
      packed[o] = K0 * it;
      packed[o + 1] = Ku * it * hu;
      packed[o + 2] = (Kv - K0) * it;
      packed[o + 3] = Kuu * it * hu * hu;
      packed[o + 4] = (Kuv - Ku) * it * hu;
      packed[o + 5] = (Kvv - 2 * Kv + K0) * it;
      packed[o + 6] = (Kuuv - Kuu) * it * hu * hu;
      packed[o + 7] = (Kuvv - 2 * Kuv + Ku) * it * hu;
      packed[o + 8] = (Kuuvv - 2 * Kuuv + Kuu) * it * hu * hu;
      boltzmannReference(d, T, ref);
      // η − η_B
      packed[o + 9] = c.eta[k] - ref[0];
      packed[o + 10] = (d * c.eta_d[k] - ref[1]) * hu;
      packed[o + 11] = T * c.eta_t[k] - ref[2];
      packed[o + 12] = (d * T * c.eta_dt[k] - ref[3]) * hu;
      // ln(d η_d) − its Boltzmann value
      const ed = c.eta_d[k], edd = c.eta_dd[k], edt = c.eta_dt[k], eddt = c.eta_ddt[k];
      packed[o + 13] = Math.log(d * ed) - ref[4];
      packed[o + 14] = (1 + (d * edd) / ed - ref[5]) * hu;
      packed[o + 15] = (T * edt) / ed - ref[6];
      packed[o + 16] = (d * T * (eddt / ed - (edd * edt) / (ed * ed)) - ref[7]) * hu;
      // totals X, X_d, X_T, X_dT of n-reference (d N_A), P, U, S from the free energy
      const P = d * d * fd, Pd = 2 * d * fd + d * d * fdd, PT = d * d * fdt, PdT = 2 * d * fdt + d * d * fddt;
      const eps = f - T * ft, epsd = fd - T * fdt, epsT = -T * ftt, epsdT = -T * fdtt;
      const U = d * eps, Ud = eps + d * epsd, UT = d * epsT, UdT = epsT + d * epsdT;
      const S = -d * ft, Sd = -ft - d * fdt, ST = -d * ftt, SdT = -ftt - d * fdtt;
      const tot = [
        [d * AVOGADRO, AVOGADRO, 0, 0],
        [P, Pd, PT, PdT],
        [U, Ud, UT, UdT],
        [S, Sd, ST, SdT],
      ] as const;
      const cols = [
        [c.positron_density, c.positron_density_d, c.positron_density_t, c.positron_density_dt],
        [c.positron_pressure, c.positron_pressure_d, c.positron_pressure_t, c.positron_pressure_dt],
        [c.positron_energy, c.positron_energy_d, c.positron_energy_t, c.positron_energy_dt],
        [c.positron_entropy, c.positron_entropy_d, c.positron_entropy_t, c.positron_entropy_dt],
      ];
      for (let q = 0; q < 4; q++) {
        const [X, Xd, XT, XdT] = tot[q];
        const [a, ad, aT, adT] = cols[q];
        const r = a[k] / X;
        const rd = (ad[k] - r * Xd) / X;
        const rT = (aT[k] - r * XT) / X;
        const rdT = (adT[k] - rT * Xd - r * XdT - rd * XT) / X;
        const rr = r + SHARE_FLOOR;
        const p = o + 17 + 4 * q;
        packed[p] = Math.log(rr) - ref[8];
        packed[p + 1] = ((d * rd) / rr - ref[9]) * hu;
        packed[p + 2] = (T * rT) / rr - ref[10];
        packed[p + 3] = (d * T * (rdT / rr - (rd * rT) / (rr * rr)) - ref[11]) * hu;
      }
    }
  }
  table.packed = packed;
  table.packedCold = packedCold;
  table.packedAxis = packAxis(grid);
  return table;
}

/** [v0 = ln T_min, vLo, vHi, 1/h_A, 1/h_B, nA, nB, nT − 1, h_A, h_B] of the T axis (h in ln T). */
function packAxis(grid: TableGrid): Float64Array {
  const ax = temperatureAxis(grid);
  const hA = Math.LN10 / ax.ppd, hB = Math.LN10 / ax.ppdBand;
  return Float64Array.of(ax.t0 * Math.LN10, ax.lo * Math.LN10, ax.hi * Math.LN10, 1 / hA, 1 / hB, ax.nA, ax.nB, ax.nA + ax.nB + ax.nC, hA, hB);
}

/** Length of boltzmannReference's output. */
const REF_LENGTH = 12;

/**
 * Smooth references the bicubic quantities are interpolated against (their remainders are nearly
 * flat where the raw quantities change by many orders of magnitude per cell), from the Boltzmann
 * pair gas of `pairBoltzmann` (its asymptotic Z̃ without the taper, which would make the
 * references steep at high T; a = n0/2Z̃, ψ = sinh⁻¹a = μ/kT with rest
 * mass, ln a = λ, λ_u = 1, λ_v = −L1):
 *   out[0..3]  η_B = ψ − 1/β and its u, v, uv derivatives;
 *   out[4..7]  ln(d η_d)_B = ln(a/(1 + a²)^{1/2}) (its d-derivative of ψ), with derivatives;
 *   out[8..11] ln(share_B + 1e-30), share_B = n₊/n0 = e^{−ψ}/(2a), with derivatives.
 * Exact identities of the Boltzmann gas; any smooth reference would do, since the kernel adds back
 * exactly what prepareTable took away.
 */
export function boltzmannReference(d: number, T: number, out: Float64Array): void {
  const beta = (BOLTZMANN_K * T) / ELECTRON_REST_ENERGY;
  const ib = 1 / beta;
  const S = 1 + beta * (15 / 8 + beta * (105 / 128));
  const S1 = beta * (15 / 8 + beta * (105 / 64));
  const Lr = PAIR_Z_C + 1.5 * Math.log(beta) + Math.log(S); // ln Z̃ + 1/β (untapered)
  const L1r = 1.5 + S1 / S; // L1 − 1/β
  const L1 = L1r + ib;
  const lamR = Math.log(d * AVOGADRO * 0.5) - Lr; // λ − 1/β
  const lam = lamR + ib;
  let etaB: number, g1: number, c1: number, g2: number, B: number, Bl: number, Bll: number;
  if (lam > 20) {
    const e2 = Math.exp(-2 * lam);
    etaB = lamR + Math.LN2 + Math.log1p(0.5 * (Math.sqrt(1 + e2) - 1));
    c1 = 0.5 * e2; // 1 − g1
    g1 = 1 - c1;
    g2 = e2;
    B = -0.5 * Math.log1p(e2);
    Bl = e2 / (1 + e2);
    Bll = (-2 * e2) / ((1 + e2) * (1 + e2));
  } else {
    const a = Math.exp(lam);
    const r = Math.sqrt(1 + a * a);
    etaB = Math.log(a + r) - ib; // sinh⁻¹a (a > 0: no cancellation; Math.asinh costs 3× Math.log here)
    g1 = a / r;
    c1 = 1 / (r * (r + a));
    g2 = a / (r * r * r);
    B = lam - 0.5 * Math.log1p(a * a);
    Bl = 1 / (1 + a * a);
    Bll = (-2 * a * a) / ((1 + a * a) * (1 + a * a));
  }
  out[0] = etaB;
  out[1] = g1;
  out[2] = -L1r * g1 + c1 * ib;
  out[3] = -L1 * g2;
  out[4] = B;
  out[5] = Bl;
  out[6] = -L1 * Bl;
  out[7] = -L1 * Bll;
  // ρ = ln share_B = −ψ − λ − ln 2 = −(η_B + 1/β) − λ − ln 2 = −η_B − λR − 2/β − ln 2
  const rho = -etaB - lamR - 2 * ib - Math.LN2;
  const rhoU = -g1 - 1, rhoV = L1 * (1 + g1), rhoUV = L1 * g2;
  const m = rho > LN_SHARE_FLOOR ? rho : LN_SHARE_FLOOR;
  const sig = 1 / (1 + Math.exp(LN_SHARE_FLOOR - rho));
  out[8] = m + Math.log1p(Math.exp(-Math.abs(rho - LN_SHARE_FLOOR)));
  out[9] = sig * rhoU;
  out[10] = sig * rhoV;
  out[11] = sig * (1 - sig) * rhoU * rhoV + sig * rhoUV;
}

export const PAIR_Z_C = Math.log((1 / (Math.PI * Math.PI)) * (ELECTRON_MASS * SPEED_OF_LIGHT * 2 * Math.PI / PLANCK_H) ** 3 * Math.sqrt(Math.PI / 2));
/** Taper exp(−(β/PAIR_TAPER_BETA)^PAIR_TAPER_POWER) of the analytic pair part (our choice; see pairBoltzmann). */
const PAIR_TAPER_BETA = 0.7;
const PAIR_TAPER_POWER = 3;

/**
 * The pair part of the free energy of a non-degenerate (Boltzmann) electron–positron gas in pair
 * equilibrium, per unit mass of ρYe, and its (u = ln d, v = ln T) derivatives, into
 * out = [Δ, Δ_u, Δ_v, Δ_uu, Δ_uv, Δ_vv, Δ_uuv, Δ_uvv, Δ_uuvv] (returns false, out untouched, where it is below
 * e^{-40} kT N_A). With n∓ = Z e^{±ψ} (ψ = μ/kT including the rest mass), neutrality n₋ − n₊ = n0 = d N_A
 * gives ψ = sinh⁻¹a, a = n0/(2Z), and F = n₋μ₋ + n₊μ₊ − (n₋ + n₊)kT per volume; Δ is that minus its
 * no-pair limit (ψ → ln 2a): Δ = k T N_A φ(a), φ = sinh⁻¹a − ln 2a − (1 + a²)^{1/2}/a + 1
 * = log1p(q/2) − q, q = 1/(a(a + (1 + a²)^{1/2})), → −1/(4a²) when pairs are few.
 * Z(T) = (1/π²)(m_e c/ħ)³ β K2(1/β) for the Boltzmann gas (Maxwell–Jüttner; β = kT/m_e c²); here
 * the asymptotic form K2(z) ≈ (π/2z)^{1/2} e^{−z}(1 + 15/8z + 105/128z²) (NIST DLMF 10.40.2) times
 * the taper exp(−(β/0.7)³), so that Z̃ is smooth and vanishes where the asymptotic form fails
 * (0.7 and 3 chosen by measurement on the default grid: the taper trades the mismatch Z̃/Z − 1 at
 * low T against its own steepness at high T; (0.5, 4) and (0.8, 3) gave larger maxima).
 * Any smooth Z̃ is exact here: the table interpolates F − F0 − Δ and Δ is added back analytically;
 * Δ only has to carry the e^{−m_e c²/kT} growth of the pairs, which one cell of the grid cannot.
 */
export function pairBoltzmann(d: number, T: number, out: Float64Array): boolean {
  const beta = (BOLTZMANN_K * T) / ELECTRON_REST_ENERGY;
  // below kT = 0.01 m_e c² the pair part is < e^{-40} kT N_A for every d ≥ 1e-15 g/cm³ (ln a > 40)
  if (beta < 0.01) return false;
  const S = 1 + beta * (15 / 8 + beta * (105 / 128));
  const S1 = beta * (15 / 8 + beta * (105 / 64)); // β S'
  const S2 = beta * beta * (105 / 64); // β² S''
  const bt = beta / PAIR_TAPER_BETA;
  const b4 = bt * bt * bt; // (β/0.7)^PAIR_TAPER_POWER, PAIR_TAPER_POWER = 3
  const L = PAIR_Z_C + 1.5 * Math.log(beta) - 1 / beta + Math.log(S) - b4; // ln Z̃
  const lam = Math.log(d * AVOGADRO * 0.5) - L; // ln a
  if (lam > 40) return false;
  const L1 = 1.5 + 1 / beta + S1 / S - PAIR_TAPER_POWER * b4;
  const L2 = -1 / beta + S1 / S + S2 / S - (S1 / S) ** 2 - PAIR_TAPER_POWER * PAIR_TAPER_POWER * b4;
  const a = Math.exp(lam);
  const r = a > 1e8 ? a * (1 + 0.5 / (a * a)) : Math.sqrt(1 + a * a);
  const q = 1 / (a * (a + r));
  const P0 = Math.log1p(0.5 * q) - q;
  const P1 = q;
  const P2 = -1 / (a * r);
  const r3 = r * r * r;
  const P3 = (1 + 2 * a * a) / (a * r3);
  const P4 = P3 * ((4 * a * a) / (1 + 2 * a * a) - 1 - (3 * a * a) / (r * r));
  const E = BOLTZMANN_K * AVOGADRO * T;
  out[0] = E * P0;
  out[1] = E * P1;
  out[2] = E * (P0 - L1 * P1);
  out[3] = E * P2;
  out[4] = E * (P1 - L1 * P2);
  out[5] = E * (P0 - 2 * L1 * P1 - L2 * P1 + L1 * L1 * P2);
  out[6] = E * (P2 - L1 * P3);
  out[7] = E * (P1 - 2 * L1 * P2 - L2 * P2 + L1 * L1 * P3);
  out[8] = E * (P2 - 2 * L1 * P3 - L2 * P3 + L1 * L1 * P4);
  return true;
}

export const LN_K_OVER_MEC2 = Math.log(BOLTZMANN_K / ELECTRON_REST_ENERGY);
export const LN_HALF_AVOGADRO = Math.log(0.5 * AVOGADRO);

/**
 * The kernel's share of `boltzmannReference` and `pairBoltzmann` at one point, computed together
 * (the same formulas; ln β, ln S and the cut-offs shared), without the derivatives only
 * prepareTable needs: out = [η_B, ln(d η_d)_B, ln(share_B + 1e-30) and its u, v derivatives,
 * Δ, Δ_u, Δ_v, Δ_uu, Δ_uv, Δ_vv, ln(share_B/1e-30)]. Returns whether Δ is non-zero (as pairBoltzmann).
 */
function kernelPairParts(d: number, T: number, u: number, v: number, out: Float64Array): boolean {
  const beta = (BOLTZMANN_K * T) / ELECTRON_REST_ENERGY;
  const ib = 1 / beta;
  const S = 1 + beta * (15 / 8 + beta * (105 / 128));
  const S1 = beta * (15 / 8 + beta * (105 / 64));
  const lnS = Math.log(S);
  const lnBeta = v + LN_K_OVER_MEC2; // ln β from v = ln T
  const Lr = PAIR_Z_C + 1.5 * lnBeta + lnS;
  const L1r = 1.5 + S1 / S;
  const L1 = L1r + ib;
  const lnHalfN0 = u + LN_HALF_AVOGADRO; // ln(n0/2) from u = ln d
  const lamR = lnHalfN0 - Lr;
  const lam = lamR + ib;
  let etaB: number, g1: number, B: number;
  if (lam > 20) {
    const e2 = Math.exp(-2 * lam);
    etaB = lamR + Math.LN2 + Math.log1p(0.5 * (Math.sqrt(1 + e2) - 1));
    g1 = 1 - 0.5 * e2;
    B = -0.5 * Math.log1p(e2);
  } else {
    const a = Math.exp(lam);
    const r = Math.sqrt(1 + a * a);
    etaB = Math.log(a + r) - ib; // sinh⁻¹a (a > 0: no cancellation; Math.asinh costs 3× Math.log here)
    g1 = a / r;
    B = lam - 0.5 * Math.log1p(a * a);
  }
  out[0] = etaB;
  out[1] = B;
  const rho = -etaB - lamR - 2 * ib - Math.LN2;
  const rhoU = -g1 - 1, rhoV = L1 * (1 + g1);
  const dr = rho - LN_SHARE_FLOOR;
  out[11] = dr;
  if (dr < -40) {
    out[2] = LN_SHARE_FLOOR + Math.exp(dr); out[3] = 0; out[4] = 0;
  } else if (dr > 40) {
    out[2] = rho; out[3] = rhoU; out[4] = rhoV;
  } else {
    const ed = Math.exp(-Math.abs(dr));
    const sig = dr > 0 ? 1 / (1 + ed) : ed / (1 + ed); // 1/(1 + e^{−dr})
    out[2] = (dr > 0 ? rho : LN_SHARE_FLOOR) + Math.log1p(ed);
    out[3] = sig * rhoU;
    out[4] = sig * rhoV;
  }
  // Δ (pairBoltzmann, values and derivatives up to second order)
  if (beta < 0.01) return false;
  const bt = beta / PAIR_TAPER_BETA;
  const b4 = bt * bt * bt;
  const lamT = lam + b4; // ln a with the tapered Z̃
  if (lamT > 40) return false;
  const S2 = beta * beta * (105 / 64);
  const LT1 = L1 - PAIR_TAPER_POWER * b4;
  const LT2 = -ib + S1 / S + S2 / S - (S1 / S) ** 2 - PAIR_TAPER_POWER * PAIR_TAPER_POWER * b4;
  const a = Math.exp(lamT);
  const r = a > 1e8 ? a * (1 + 0.5 / (a * a)) : Math.sqrt(1 + a * a);
  const q = 1 / (a * (a + r));
  const P0 = Math.log1p(0.5 * q) - q;
  const P1 = q;
  const P2 = -1 / (a * r);
  const E = BOLTZMANN_K * AVOGADRO * T;
  out[5] = E * P0;
  out[6] = E * P1;
  out[7] = E * (P0 - LT1 * P1);
  out[8] = E * P2;
  out[9] = E * (P1 - LT1 * P2);
  out[10] = E * (P0 - 2 * LT1 * P1 - LT2 * P1 + LT1 * LT1 * P2);
  return true;
}

/** Below this kT/E_F the thermal free energy of a table node comes from the Sommerfeld series (prepareTable). */
const SOMMERFELD_SWITCH = 3e-3;
const COLD_X = PLANCK_H / (ELECTRON_MASS * SPEED_OF_LIGHT) * Math.cbrt(3 / (8 * Math.PI));
const COLD_P = (Math.PI * ELECTRON_MASS ** 4 * SPEED_OF_LIGHT ** 5) / PLANCK_H ** 3;

/**
 * Free energy per unit mass of ρYe of the zero-temperature electron gas (Chandrasekhar 1939,
 * "An Introduction to the Study of Stellar Structure", ch. X): with n = d N_A,
 * x = p_F/(m_e c) = (h/(m_e c))(3n/8π)^{1/3},
 *   P0 = (π m_e⁴c⁵/h³)·(1/3)[x(2x² − 3)(1 + x²)^{1/2} + 3 sinh⁻¹x] = (π m_e⁴c⁵/h³)(8/3)∫₀ˣ t⁴(1 + t²)^{−1/2} dt,
 *   f0 = U0/d = N_A (μ0 − m_e c²) − P0/d,  μ0 − m_e c² = m_e c² x²/(1 + (1 + x²)^{1/2}),
 * and, with u = ln d, f0_u = P0/d, f0_uu = N_A m_e c² x²/(3(1 + x²)^{1/2}) − P0/d (dP0/dn = n dμ0/dn).
 * For x ≤ 0.5 the bracket is summed as its series (8/3)Σ_k c_k x^{2k+5}/(2k+5), c_k the binomial
 * coefficients of (1 + t²)^{−1/2}, which avoids the cancellation of the closed form (relative
 * accuracy ≤ 1e-15 either way). out = [f0, f0_u, f0_uu, E_F = μ0 − m_e c²].
 */
export function coldFreeEnergy(d: number, out: Float64Array): void {
  const n = d * AVOGADRO;
  const x = COLD_X * Math.cbrt(n);
  const x2 = x * x;
  const r = Math.sqrt(1 + x2);
  let B: number;
  if (x <= 0.5) {
    let ck = 1;
    let pw = x2 * x2 * x;
    B = 0;
    for (let k = 0; k < 60; k++) {
      const t = (ck * pw) / (2 * k + 5);
      B += t;
      if (Math.abs(t) < 1e-17 * Math.abs(B)) break;
      ck *= -(2 * k + 1) / (2 * k + 2);
      pw *= x2;
    }
    B *= 8 / 3;
  } else {
    B = (x * (2 * x2 - 3) * r + 3 * Math.asinh(x)) / 3;
  }
  const P0 = COLD_P * B;
  const EF = (ELECTRON_REST_ENERGY * x2) / (1 + r);
  out[0] = AVOGADRO * EF - P0 / d;
  out[1] = P0 / d;
  out[2] = (AVOGADRO * ELECTRON_REST_ENERGY * x2) / (3 * r) - P0 / d;
  out[3] = EF;
}

// ---------------------------------------------------------------------------------------------
// The interpolation kernel

/** tablePairGas succeeded. */
export const TABLE_OK = 0;
/** (d, T) outside the table's grid: `out` untouched except status; no extrapolation. */
export const TABLE_OUTSIDE = 1;

/** kernelPairParts' output (one per thread; the kernel is synchronous). */
const kernelRef = new Float64Array(12);

/**
 * The pair gas at (d = ρYe, T) from the table, in the same form as electron-positron.ts's pairGas
 * (totals per volume with ∂/∂d|_T and ∂/∂T|_d; positrons; electrons = total − positrons; η; n±;
 * ∂η/∂d and ∂η/∂T are NaN). Returns TABLE_OK or TABLE_OUTSIDE. No allocation.
 */
export function tablePairGas(table: FreeEnergyTable, d: number, T: number, out: PairGasState): number {
  const g = table.grid;
  const data = table.packed!;
  const ax = table.packedAxis!;
  const nD = table.nD;
  const nT = table.nT;
  const u = Math.log(d);
  const v = Math.log(T);
  const invHu = g.pointsPerDecadeDensity / Math.LN10;
  const fx = (u - g.logDensityYeMin * Math.LN10) * invHu;
  // the T axis: uniform pieces [v0, vLo], [vLo, vHi] (the denser band), [vHi, v1]
  const nA = ax[5], nB = ax[6], nT1 = ax[7];
  let fy = (v - ax[0]) * ax[3];
  let invHv = ax[3], hv = ax[8];
  let jOff = 0;
  if (fy > nA) {
    const fb = (v - ax[1]) * ax[4];
    if (fb <= nB) {
      fy = fb; jOff = nA; invHv = ax[4]; hv = ax[9];
    } else {
      fy = (v - ax[2]) * ax[3]; jOff = nA + nB;
    }
  }
  if (!(fx >= -1e-9 && fx <= nD - 1 + 1e-9 && fy + jOff >= -1e-9 && fy + jOff <= nT1 + 1e-9)) return TABLE_OUTSIDE;
  let i = Math.floor(fx);
  let j = Math.floor(fy) + jOff;
  if (i > nD - 2) i = nD - 2;
  if (j > nT - 2) j = nT - 2;
  if (i < 0) i = 0;
  if (j < 0) j = 0;
  const x = fx - i;
  const y = fy + jOff - j;
  const mx = 1 - x;
  const my = 1 - y;

  // quintic Hermite basis: values, first and second derivatives, left (…0) and right (…1) node
  const x2 = x * x, x3 = x2 * x, x4 = x3 * x, x5 = x4 * x;
  const m2 = mx * mx, m3 = m2 * mx, m4 = m3 * mx, m5 = m4 * mx;
  const a00 = 1 - 10 * x3 + 15 * x4 - 6 * x5, a01 = x - 6 * x3 + 8 * x4 - 3 * x5, a02 = 0.5 * (x2 - 3 * x3 + 3 * x4 - x5);
  const a10 = 1 - 10 * m3 + 15 * m4 - 6 * m5, a11 = -(mx - 6 * m3 + 8 * m4 - 3 * m5), a12 = 0.5 * (m2 - 3 * m3 + 3 * m4 - m5);
  const b00d = -30 * x2 + 60 * x3 - 30 * x4, b01d = 1 - 18 * x2 + 32 * x3 - 15 * x4, b02d = 0.5 * (2 * x - 9 * x2 + 12 * x3 - 5 * x4);
  const b10d = 30 * m2 - 60 * m3 + 30 * m4, b11d = 1 - 18 * m2 + 32 * m3 - 15 * m4, b12d = -0.5 * (2 * mx - 9 * m2 + 12 * m3 - 5 * m4);
  const y2 = y * y, y3 = y2 * y, y4 = y3 * y, y5 = y4 * y;
  const n2 = my * my, n3 = n2 * my, n4 = n3 * my, n5 = n4 * my;
  const p00 = 1 - 10 * y3 + 15 * y4 - 6 * y5, p01u = y - 6 * y3 + 8 * y4 - 3 * y5, p02u = 0.5 * (y2 - 3 * y3 + 3 * y4 - y5);
  const p10 = 1 - 10 * n3 + 15 * n4 - 6 * n5, p11u = -(my - 6 * n3 + 8 * n4 - 3 * n5), p12u = 0.5 * (n2 - 3 * n3 + 3 * n4 - n5);
  const q00 = -30 * y2 + 60 * y3 - 30 * y4, q01u = 1 - 18 * y2 + 32 * y3 - 15 * y4, q02u = 0.5 * (2 * y - 9 * y2 + 12 * y3 - 5 * y4);
  const q10 = 30 * n2 - 60 * n3 + 30 * n4, q11u = 1 - 18 * n2 + 32 * n3 - 15 * n4, q12u = -0.5 * (2 * my - 9 * n2 + 12 * n3 - 5 * n4);
  const r00 = -60 * y + 180 * y2 - 120 * y3, r01u = -36 * y + 96 * y2 - 60 * y3, r02u = 0.5 * (2 - 18 * y + 36 * y2 - 20 * y3);
  const r10 = -60 * my + 180 * n2 - 120 * n3, r11u = -(-36 * my + 96 * n2 - 60 * n3), r12u = 0.5 * (2 - 18 * my + 36 * n2 - 20 * n3);
  // the node data hold v-derivatives unscaled (the cell's h_v varies along the axis): scale the basis
  const hv2 = hv * hv;
  const p01 = p01u * hv, p02 = p02u * hv2, p11 = p11u * hv, p12 = p12u * hv2;
  const q01 = q01u * hv, q02 = q02u * hv2, q11 = q11u * hv, q12 = q12u * hv2;
  const r01 = r01u * hv, r02 = r02u * hv2, r11 = r11u * hv, r12 = r12u * hv2;

  // (no ∂²/∂u²: ∂P/∂d comes from η by Gibbs–Duhem below, which is more accurate where pairs dominate)
  // Contract along x first (both x-nodes at once), then apply each y-node's basis once:
  // A_l = Σ_m H[m, l] a_m over the x-nodes i, i+1 (m, l the orders of the u- and v-derivatives).
  let F = 0, Fx = 0, Fy = 0, Fxy = 0, Fyy = 0;
  const oA = (i * nT + j) * STRIDE, oB = oA + nT * STRIDE, oC = oA + STRIDE, oD = oB + STRIDE;
  // Touch every cache line of the four nodes first, so that their misses overlap instead of
  // following one another as the code below reaches them (JavaScript has no prefetch; the NaN
  // test keeps the loads alive and never fires: table data are finite). ~12 % on random states.
  const touch = data[oA] + data[oA + 8] + data[oA + 16] + data[oA + 24] + data[oA + 32] + data[oA + 40] + data[oA + 48] + data[oA + 56] + data[oA + 65]
    + data[oB] + data[oB + 8] + data[oB + 16] + data[oB + 24] + data[oB + 32] + data[oB + 40] + data[oB + 48] + data[oB + 56] + data[oB + 65];
  if (touch !== touch) return TABLE_OUTSIDE;
  {
    const A0 = data[oA] * a00 + data[oA + 1] * a01 + data[oA + 3] * a02 + data[oB] * a10 + data[oB + 1] * a11 + data[oB + 3] * a12;
    const A1 = data[oA + 2] * a00 + data[oA + 4] * a01 + data[oA + 6] * a02 + data[oB + 2] * a10 + data[oB + 4] * a11 + data[oB + 6] * a12;
    const A2 = data[oA + 5] * a00 + data[oA + 7] * a01 + data[oA + 8] * a02 + data[oB + 5] * a10 + data[oB + 7] * a11 + data[oB + 8] * a12;
    const B0 = data[oA] * b00d + data[oA + 1] * b01d + data[oA + 3] * b02d + data[oB] * b10d + data[oB + 1] * b11d + data[oB + 3] * b12d;
    const B1 = data[oA + 2] * b00d + data[oA + 4] * b01d + data[oA + 6] * b02d + data[oB + 2] * b10d + data[oB + 4] * b11d + data[oB + 6] * b12d;
    const B2 = data[oA + 5] * b00d + data[oA + 7] * b01d + data[oA + 8] * b02d + data[oB + 5] * b10d + data[oB + 7] * b11d + data[oB + 8] * b12d;
    F += A0 * p00 + A1 * p01 + A2 * p02;
    Fy += A0 * q00 + A1 * q01 + A2 * q02;
    Fyy += A0 * r00 + A1 * r01 + A2 * r02;
    Fx += B0 * p00 + B1 * p01 + B2 * p02;
    Fxy += B0 * q00 + B1 * q01 + B2 * q02;
  }
  {
    const A0 = data[oC] * a00 + data[oC + 1] * a01 + data[oC + 3] * a02 + data[oD] * a10 + data[oD + 1] * a11 + data[oD + 3] * a12;
    const A1 = data[oC + 2] * a00 + data[oC + 4] * a01 + data[oC + 6] * a02 + data[oD + 2] * a10 + data[oD + 4] * a11 + data[oD + 6] * a12;
    const A2 = data[oC + 5] * a00 + data[oC + 7] * a01 + data[oC + 8] * a02 + data[oD + 5] * a10 + data[oD + 7] * a11 + data[oD + 8] * a12;
    const B0 = data[oC] * b00d + data[oC + 1] * b01d + data[oC + 3] * b02d + data[oD] * b10d + data[oD + 1] * b11d + data[oD + 3] * b12d;
    const B1 = data[oC + 2] * b00d + data[oC + 4] * b01d + data[oC + 6] * b02d + data[oD + 2] * b10d + data[oD + 4] * b11d + data[oD + 6] * b12d;
    const B2 = data[oC + 5] * b00d + data[oC + 7] * b01d + data[oC + 8] * b02d + data[oD + 5] * b10d + data[oD + 7] * b11d + data[oD + 8] * b12d;
    F += A0 * p10 + A1 * p11 + A2 * p12;
    Fy += A0 * q10 + A1 * q11 + A2 * q12;
    Fyy += A0 * r10 + A1 * r11 + A2 * r12;
    Fx += B0 * p10 + B1 * p11 + B2 * p12;
    Fxy += B0 * q10 + B1 * q11 + B2 * q12;
  }
  // the interpolant is H = G/T; G = T H and its (u = ln d, v = ln T) derivatives
  const Hu = Fx * invHu, Hv = Fy * invHv;
  const Huv = Fxy * invHu * invHv, Hvv = Fyy * invHv * invHv;
  F = T * F;
  let Fu = T * Hu;
  let Fv = F + T * Hv;
  let Fuv = T * (Hu + Huv);
  let Fvv = Fv + T * (Hv + Hvv);
  // add the T = 0 part F0(u) (quintic Hermite in u alone; it has no v-dependence)
  {
    const cold = table.packedCold!;
    const c0 = 3 * i;
    F += cold[c0] * a00 + cold[c0 + 1] * a01 + cold[c0 + 2] * a02 + cold[c0 + 3] * a10 + cold[c0 + 4] * a11 + cold[c0 + 5] * a12;
    Fu += (cold[c0] * b00d + cold[c0 + 1] * b01d + cold[c0 + 2] * b02d + cold[c0 + 3] * b10d + cold[c0 + 4] * b11d + cold[c0 + 5] * b12d) * invHu;
  }
  // and the analytic pair part Δ(u, v)
  const ref = kernelRef;
  if (kernelPairParts(d, T, u, v, ref)) {
    F += ref[5]; Fu += ref[6]; Fv += ref[7];
    Fuv += ref[9]; Fvv += ref[10];
  }
  const invT = 1 / T;
  const P = d * Fu;
  const eps = F - Fv; // energy per unit mass of ρYe
  const sig = -Fv * invT; // entropy per unit mass of ρYe
  out.pressure = P;
  out.dPdT = d * Fuv * invT;
  out.energy = d * eps;
  out.dUdD = eps + Fu - Fuv; // ε + d ε_d
  out.dUdT = d * (Fv - Fvv) * invT;
  out.entropy = d * sig;
  out.dSdD = sig - Fuv * invT; // σ + d σ_d
  out.dSdT = d * (Fv - Fvv) * invT * invT;

  // bicubic Hermite for the remainders after boltzmannReference: h00 = 2x³ − 3x² + 1, h10 = x³ − 2x² + x
  // (y-derivative weights scaled by the cell's h_v, as above)
  const e0 = 2 * x3 - 3 * x2 + 1, e1 = x3 - 2 * x2 + x, e2 = 1 - e0, e3 = -(m3 - 2 * m2 + mx);
  const e0d = 6 * x2 - 6 * x, e1d = 3 * x2 - 4 * x + 1, e2d = -e0d, e3d = 3 * m2 - 4 * mx + 1;
  const f0 = 2 * y3 - 3 * y2 + 1, f1 = (y3 - 2 * y2 + y) * hv, f2 = 1 - f0, f3 = -(n3 - 2 * n2 + my) * hv;
  const f0d = 6 * y2 - 6 * y, f1d = (3 * y2 - 4 * y + 1) * hv, f2d = -f0d, f3d = (3 * n2 - 4 * my + 1) * hv;
  // η (value only)
  {
    const q = 9;
    const A = data[oA + q] * f0 + data[oA + q + 2] * f1, Ax = data[oA + q + 1] * f0 + data[oA + q + 3] * f1;
    const B = data[oB + q] * f0 + data[oB + q + 2] * f1, Bx = data[oB + q + 1] * f0 + data[oB + q + 3] * f1;
    const C = data[oC + q] * f2 + data[oC + q + 2] * f3, Cx = data[oC + q + 1] * f2 + data[oC + q + 3] * f3;
    const D = data[oD + q] * f2 + data[oD + q + 2] * f3, Dx = data[oD + q + 1] * f2 + data[oD + q + 3] * f3;
    out.eta = (A + C) * e0 + (Ax + Cx) * e1 + (B + D) * e2 + (Bx + Dx) * e3 + ref[0];
  }
  out.detaDd = NaN;
  out.detaDT = NaN;
  // ∂P/∂d = N_A k T d η_d (Gibbs–Duhem at fixed T); d η_d from ln(d η_d). F_u + F_uu, the
  // d-derivative of the interpolated P, cancels to ~(n0/n_pairs)² where pairs dominate.
  {
    const q = 13;
    const A = data[oA + q] * f0 + data[oA + q + 2] * f1, Ax = data[oA + q + 1] * f0 + data[oA + q + 3] * f1;
    const B = data[oB + q] * f0 + data[oB + q + 2] * f1, Bx = data[oB + q + 1] * f0 + data[oB + q + 3] * f1;
    const C = data[oC + q] * f2 + data[oC + q + 2] * f3, Cx = data[oC + q + 1] * f2 + data[oC + q + 3] * f3;
    const D = data[oD + q] * f2 + data[oD + q + 2] * f3, Dx = data[oD + q + 1] * f2 + data[oD + q + 3] * f3;
    const lnEtaU = (A + C) * e0 + (Ax + Cx) * e1 + (B + D) * e2 + (Bx + Dx) * e3 + ref[1];
    out.dPdD = AVOGADRO * BOLTZMANN_K * T * Math.exp(lnEtaU);
  }
  // positron shares: L, ∂L/∂u, ∂L/∂v for n (of d N_A), P, U, S
  const pos = out.positrons;
  if (ref[11] < -30) {
    // the Boltzmann share n₊/n0 is below 1e-43 (e^{-30} of the 1e-30 floor): no positrons on any
    // scale of the totals; the Fermi–Dirac share is not larger (degenerate electrons suppress pairs)
    out.positronDensity = 0;
    out.electronDensity = d * AVOGADRO;
    pos.pressure = 0; pos.dPdD = 0; pos.dPdT = 0;
    pos.energy = 0; pos.dUdD = 0; pos.dUdT = 0;
    pos.entropy = 0; pos.dSdD = 0; pos.dSdT = 0;
  } else for (let s = 0; s < 4; s++) {
    const q = 17 + 4 * s;
    const A = data[oA + q] * f0 + data[oA + q + 2] * f1, Ax = data[oA + q + 1] * f0 + data[oA + q + 3] * f1;
    const B = data[oB + q] * f0 + data[oB + q + 2] * f1, Bx = data[oB + q + 1] * f0 + data[oB + q + 3] * f1;
    const C = data[oC + q] * f2 + data[oC + q + 2] * f3, Cx = data[oC + q + 1] * f2 + data[oC + q + 3] * f3;
    const D = data[oD + q] * f2 + data[oD + q + 2] * f3, Dx = data[oD + q + 1] * f2 + data[oD + q + 3] * f3;
    const Ay = data[oA + q] * f0d + data[oA + q + 2] * f1d, Axy = data[oA + q + 1] * f0d + data[oA + q + 3] * f1d;
    const By = data[oB + q] * f0d + data[oB + q + 2] * f1d, Bxy = data[oB + q + 1] * f0d + data[oB + q + 3] * f1d;
    const Cy = data[oC + q] * f2d + data[oC + q + 2] * f3d, Cxy = data[oC + q + 1] * f2d + data[oC + q + 3] * f3d;
    const Dy = data[oD + q] * f2d + data[oD + q + 2] * f3d, Dxy = data[oD + q + 1] * f2d + data[oD + q + 3] * f3d;
    const L = (A + C) * e0 + (Ax + Cx) * e1 + (B + D) * e2 + (Bx + Dx) * e3 + ref[2];
    const Lu = ((A + C) * e0d + (Ax + Cx) * e1d + (B + D) * e2d + (Bx + Dx) * e3d) * invHu + ref[3];
    const Lv = ((Ay + Cy) * e0 + (Axy + Cxy) * e1 + (By + Dy) * e2 + (Bxy + Dxy) * e3) * invHv + ref[4];
    // shares below 1e-36 (1e-6 of the floor) are zero: no positrons on the scale of the totals
    const ex = L - LN_SHARE_FLOOR < 1e-6 ? SHARE_FLOOR : Math.exp(L);
    let r = ex - SHARE_FLOOR;
    if (r < 1e-290) r = 0;
    const rd = r === 0 ? 0 : (ex * Lu) / d; // ∂r/∂d
    const rT = r === 0 ? 0 : ex * Lv * invT;
    if (s === 0) {
      const n0 = d * AVOGADRO;
      out.positronDensity = r * n0;
      out.electronDensity = r * n0 + n0;
    } else if (s === 1) {
      pos.pressure = r * P;
      pos.dPdD = rd * P + r * out.dPdD;
      pos.dPdT = rT * P + r * out.dPdT;
    } else if (s === 2) {
      pos.energy = r * out.energy;
      pos.dUdD = rd * out.energy + r * out.dUdD;
      pos.dUdT = rT * out.energy + r * out.dUdT;
    } else {
      pos.entropy = r * out.entropy;
      pos.dSdD = rd * out.entropy + r * out.dSdD;
      pos.dSdT = rT * out.entropy + r * out.dSdT;
    }
  }
  const el = out.electrons;
  el.pressure = P - pos.pressure; el.dPdD = out.dPdD - pos.dPdD; el.dPdT = out.dPdT - pos.dPdT;
  el.energy = out.energy - pos.energy; el.dUdD = out.dUdD - pos.dUdD; el.dUdT = out.dUdT - pos.dUdT;
  el.entropy = out.entropy - pos.entropy; el.dSdD = out.dSdD - pos.dSdD; el.dSdT = out.dSdT - pos.dSdT;
  out.iterations = 0;
  return TABLE_OK;
}

// ---------------------------------------------------------------------------------------------
// Accuracy report

export interface AccuracyPoints {
  logD: Float64Array;
  logT: Float64Array;
  cellCentres: number;
}

function mulberry32(seed: number): () => number {
  let a = seed;
  return () => {
    a |= 0;
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Off-grid test points: every cell centre (optional) and a seeded uniform sample in (log d, log T). */
export function accuracySamplePoints(grid: TableGrid, randomPoints: number, seed: number, cellCentres = true): AccuracyPoints {
  const { nD, nT } = gridSize(grid);
  const nc = cellCentres ? (nD - 1) * (nT - 1) : 0;
  const logD = new Float64Array(nc + randomPoints);
  const logT = new Float64Array(nc + randomPoints);
  let k = 0;
  if (cellCentres) {
    for (let i = 0; i < nD - 1; i++) {
      for (let j = 0; j < nT - 1; j++) {
        logD[k] = nodeLogDensityYe(grid, i + 0.5);
        logT[k] = nodeLogTemperature(grid, j + 0.5);
        k++;
      }
    }
  }
  const rnd = mulberry32(seed);
  for (let m = 0; m < randomPoints; m++) {
    logD[k] = grid.logDensityYeMin + (grid.logDensityYeMax - grid.logDensityYeMin) * rnd();
    logT[k] = grid.logTemperatureMin + (grid.logTemperatureMax - grid.logTemperatureMin) * rnd();
    k++;
  }
  return { logD, logT, cellCentres: nc };
}

/** Quantities of the accuracy report, in this order in the error arrays. */
export const ACCURACY_QUANTITIES = ['pressure', 'energy', 'entropy', 'dPdD', 'dPdT', 'dEdT', 'dSdT', 'eta', 'positronDensity'] as const;

/**
 * Relative errors table vs exact at the points (k-th quantity at errors[q·n + m]); the last n values
 * are the largest Maxwell residual per point. Pure; the CLI runs it in workers on slices.
 */
export function measureErrors(table: FreeEnergyTable, pts: { logD: Float64Array; logT: Float64Array }, from = 0, to = pts.logD.length): Float64Array {
  const n = to - from;
  const nq = ACCURACY_QUANTITIES.length;
  const err = new Float64Array((nq + 1) * n);
  const ex = createPairGasState();
  const tb = createPairGasState();
  const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));
  for (let m = 0; m < n; m++) {
    const d = 10 ** pts.logD[from + m];
    const T = 10 ** pts.logT[from + m];
    const s1 = pairGas(d, T, ex);
    const s2 = tablePairGas(table, d, T, tb);
    if (s1 !== PAIR_OK || s2 !== TABLE_OK) {
      for (let q = 0; q <= nq; q++) err[q * n + m] = NaN;
      continue;
    }
    err[0 * n + m] = rel(tb.pressure, ex.pressure);
    err[1 * n + m] = rel(tb.energy, ex.energy);
    err[2 * n + m] = rel(tb.entropy, ex.entropy);
    err[3 * n + m] = rel(tb.dPdD, ex.dPdD);
    err[4 * n + m] = rel(tb.dPdT, ex.dPdT);
    err[5 * n + m] = rel(tb.dUdT, ex.dUdT);
    err[6 * n + m] = rel(tb.dSdT, ex.dSdT);
    err[7 * n + m] = Math.abs(tb.eta - ex.eta) / Math.max(1, Math.abs(ex.eta));
    // positron density relative to the electron density (it matters only on that scale)
    err[8 * n + m] = Math.abs(tb.positronDensity - ex.positronDensity) / ex.electronDensity;
    // Maxwell residuals per unit of d (ρ = d, Ye = 1): energy, entropyT, entropyRho normalized
    const e = tb.energy / d, ed = (tb.dUdD - e) / d, eT = tb.dUdT / d;
    const s = tb.entropy / d, sd = (tb.dSdD - s) / d, sT = tb.dSdT / d;
    const a1 = d * d * ed, b1 = tb.pressure - T * tb.dPdT;
    const r1 = Math.abs(a1 - b1) / (Math.abs(a1) + Math.abs(tb.pressure) + Math.abs(T * tb.dPdT));
    const r2 = Math.abs(sT - eT / T) / (Math.abs(sT) + Math.abs(eT / T));
    const r3 = Math.abs(sd + tb.dPdT / (d * d)) / (Math.abs(sd) + Math.abs(tb.dPdT / (d * d)));
    err[nq * n + m] = Math.max(r1, r2, r3);
  }
  return err;
}

/** Summarize concatenated error arrays (as from measureErrors over all points) into the report. */
export function summarizeAccuracy(err: Float64Array, pts: AccuracyPoints, seed: number, cellCentres: number): AccuracyReport {
  const n = pts.logD.length;
  const nq = ACCURACY_QUANTITIES.length;
  const quantities: Record<string, AccuracyStats> = {};
  for (let q = 0; q < nq; q++) {
    const col = err.subarray(q * n, (q + 1) * n);
    let worst = -1;
    let max = -Infinity;
    const vals: number[] = [];
    for (let m = 0; m < n; m++) {
      const v = col[m];
      if (Number.isNaN(v)) continue;
      vals.push(v);
      if (v > max) {
        max = v;
        worst = m;
      }
    }
    vals.sort((a, b) => a - b);
    quantities[ACCURACY_QUANTITIES[q]] = {
      max,
      median: vals[Math.floor(0.5 * (vals.length - 1))],
      p99: vals[Math.floor(0.99 * (vals.length - 1))],
      worstLogDensityYe: worst >= 0 ? pts.logD[worst] : NaN,
      worstLogTemperature: worst >= 0 ? pts.logT[worst] : NaN,
    };
  }
  let mx = 0;
  for (let m = 0; m < n; m++) {
    const v = err[nq * n + m];
    if (v > mx) mx = v;
  }
  return { quantities, cellCentres, randomPoints: n - cellCentres, seed, maxwellMax: mx };
}

/** Whether (d, T) lies inside the table's grid. */
export function insideTable(table: FreeEnergyTable, d: number, T: number): boolean {
  const g = table.grid;
  const ld = Math.log10(d);
  const lt = Math.log10(T);
  return ld >= g.logDensityYeMin - 1e-12 && ld <= g.logDensityYeMax + 1e-12 && lt >= g.logTemperatureMin - 1e-12 && lt <= g.logTemperatureMax + 1e-12;
}
