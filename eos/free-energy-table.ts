/**
 * Free-energy table of the electron–positron gas and its thermodynamically consistent
 * interpolation: the method of Timmes & Swesty (2000, ApJS 126, 501). Pure computation, no I/O.
 *
 * What is tabulated. The Helmholtz free energy per unit mass of ρYe, f(d, T) = (U − TS)/d with
 * d = ρ·Ye (the pair gas depends on ρ and composition only through d), on a grid uniform in
 * log10 d and log10 T, with the derivatives the biquintic Hermite interpolation needs —
 * f, f_d, f_T, f_dd, f_dT, f_TT, f_ddT, f_dTT, f_ddTT — all analytic from the exact method
 * (pair-gas-second-derivatives.ts; no finite differences). Also η with η_d, η_T, η_dT, and the
 * positron n₊, P₊, U₊, S₊ with their d, T and mixed derivatives (bicubic Hermite, for η, n± and the
 * positron component; they do not enter the totals).
 *
 * Interpolation (our variant of the published scheme): the quintic Hermite basis
 * ψ0 = 1 − 10z³ + 15z⁴ − 6z⁵, ψ1 = z − 6z³ + 8z⁴ − 3z⁵, ψ2 = (z² − 3z³ + 3z⁴ − z⁵)/2 in each
 * direction, in the variables u = ln d, v = ln T (rather than d, T; f is nearly a power law or
 * linear in them, which gains orders of magnitude of accuracy at the same spacing). Then, with
 * F(u, v) the interpolant, P = d F_u, s = −F_v/T (per unit mass of ρYe), e = F − F_v,
 * ∂P/∂d = F_u + F_uu, ∂P/∂T = d F_uv/T, ∂e/∂d = (F_u − F_uv)/d, ∂e/∂T = (F_v − F_vv)/T,
 * ∂s/∂d = −F_uv/(dT), ∂s/∂T = (F_v − F_vv)/T². All come from the one interpolated F, so the three
 * Maxwell relations (Timmes & Arnett 1999, ApJS 125, 277) hold to rounding. The positron shares of
 * n, P, U, S are interpolated bicubically as ln(share + 1e-30).
 *
 * Accuracy: measured by `measureAccuracy` at cell centres and a seeded random sample against the
 * exact method and stored in the table (`table.accuracy`); the default grid (20 points per decade)
 * reaches the figures given in eos/README.md ("Table method").
 */

import { AVOGADRO } from './constants.js';
import { createPairGasState, pairGas, PAIR_OK, type PairGasState } from './electron-positron.js';
import { NODE_ETA, NODE_LENGTH, pairGasNode } from './pair-gas-second-derivatives.js';

export const TABLE_FORMAT = 'fermiwell free-energy table';
export const TABLE_FORMAT_VERSION = 1;

/** Grid in log10 d (d = ρYe, g/cm³) and log10 T (K); points per decade in each direction. */
export interface TableGrid {
  logDensityYeMin: number;
  logDensityYeMax: number;
  logTemperatureMin: number;
  logTemperatureMax: number;
  pointsPerDecadeDensity: number;
  pointsPerDecadeTemperature: number;
}

export const DEFAULT_TABLE_GRID: Readonly<TableGrid> = Object.freeze({
  logDensityYeMin: -12,
  logDensityYeMax: 15,
  logTemperatureMin: 3,
  logTemperatureMax: 13,
  pointsPerDecadeDensity: 20,
  pointsPerDecadeTemperature: 20,
});

/** Tabulated columns, each nD·nT values, index i·nT + j (i along d, j along T). Physical (d, T) derivatives. */
export const TABLE_COLUMNS = [
  'free_energy', 'free_energy_d', 'free_energy_t', 'free_energy_dd', 'free_energy_dt', 'free_energy_tt',
  'free_energy_ddt', 'free_energy_dtt', 'free_energy_ddtt',
  'eta', 'eta_d', 'eta_t', 'eta_dt',
  'positron_density', 'positron_density_d', 'positron_density_t', 'positron_density_dt',
  'positron_pressure', 'positron_pressure_d', 'positron_pressure_t', 'positron_pressure_dt',
  'positron_energy', 'positron_energy_d', 'positron_energy_t', 'positron_energy_dt',
  'positron_entropy', 'positron_entropy_d', 'positron_entropy_t', 'positron_entropy_dt',
] as const;
export type TableColumnName = (typeof TABLE_COLUMNS)[number];
/** Number of node values (TABLE_COLUMNS.length); equals the first 29 entries of a pairGasNode output. */
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
}

export function gridSize(grid: TableGrid): { nD: number; nT: number } {
  const nD = Math.round((grid.logDensityYeMax - grid.logDensityYeMin) * grid.pointsPerDecadeDensity) + 1;
  const nT = Math.round((grid.logTemperatureMax - grid.logTemperatureMin) * grid.pointsPerDecadeTemperature) + 1;
  return { nD, nT };
}

export function validateGrid(grid: TableGrid): void {
  const vals = Object.values(grid);
  if (vals.some((v) => typeof v !== 'number' || !Number.isFinite(v))) throw new Error('table grid: every bound and density must be a finite number');
  if (!(grid.logDensityYeMax > grid.logDensityYeMin) || !(grid.logTemperatureMax > grid.logTemperatureMin)) throw new Error('table grid: max must exceed min');
  if (!(grid.pointsPerDecadeDensity >= 1) || !(grid.pointsPerDecadeTemperature >= 1)) throw new Error('table grid: at least 1 point per decade');
  const { nD, nT } = gridSize(grid);
  const spanD = (nD - 1) / grid.pointsPerDecadeDensity;
  const spanT = (nT - 1) / grid.pointsPerDecadeTemperature;
  if (Math.abs(spanD - (grid.logDensityYeMax - grid.logDensityYeMin)) > 1e-9 || Math.abs(spanT - (grid.logTemperatureMax - grid.logTemperatureMin)) > 1e-9) {
    throw new Error('table grid: the ranges must be whole multiples of the spacing 1/pointsPerDecade');
  }
  if (grid.logTemperatureMin < 3 - 1e-12 || grid.logTemperatureMax > 13 + 1e-12) throw new Error('table grid: log10 T must lie in [3, 13]');
  if (grid.logDensityYeMin < -15 - 1e-12 || grid.logDensityYeMax > 15 + 1e-12) throw new Error('table grid: log10 ρYe must lie in [-15, 15]');
}

export function nodeLogDensityYe(grid: TableGrid, i: number): number {
  return grid.logDensityYeMin + i / grid.pointsPerDecadeDensity;
}
export function nodeLogTemperature(grid: TableGrid, j: number): number {
  return grid.logTemperatureMin + j / grid.pointsPerDecadeTemperature;
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
    grid: { ...grid },
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
const STRIDE = 29;
const SHARE_FLOOR = 1e-30;

/**
 * Derives the kernel's packed array from the columns (call after loading a table from a file;
 * assembleTable calls it). Layout per node: 9 scaled F values (F, F_x, F_y, F_xx, F_xy, F_yy,
 * F_xxy, F_xyy, F_xxyy with x = u/h_u, y = v/h_v), then η, η_x, η_y, η_xy, then for the positron
 * shares of n (relative to d N_A), P, U, S: L, L_x, L_y, L_xy with L = ln(share + 1e-30).
 */
export function prepareTable(table: FreeEnergyTable): FreeEnergyTable {
  const { nD, nT, grid, columns: c } = table;
  const hu = Math.LN10 / grid.pointsPerDecadeDensity;
  const hv = Math.LN10 / grid.pointsPerDecadeTemperature;
  const packed = new Float64Array(nD * nT * STRIDE);
  for (let i = 0; i < nD; i++) {
    const d = 10 ** nodeLogDensityYe(grid, i);
    for (let j = 0; j < nT; j++) {
      const T = 10 ** nodeLogTemperature(grid, j);
      const k = i * nT + j;
      const o = k * STRIDE;
      const f = c.free_energy[k], fd = c.free_energy_d[k], ft = c.free_energy_t[k], fdd = c.free_energy_dd[k];
      const fdt = c.free_energy_dt[k], ftt = c.free_energy_tt[k], fddt = c.free_energy_ddt[k], fdtt = c.free_energy_dtt[k];
      const fddtt = c.free_energy_ddtt[k];
      // F(u, v) and its derivatives in u = ln d, v = ln T
      const F = f, Fu = d * fd, Fv = T * ft, Fuu = d * d * fdd + d * fd, Fuv = d * T * fdt, Fvv = T * T * ftt + T * ft;
      const Fuuv = T * (d * d * fddt + d * fdt), Fuvv = d * (T * T * fdtt + T * fdt);
      const Fuuvv = d * d * T * T * fddtt + d * d * T * fddt + d * T * T * fdtt + d * T * fdt;
      packed[o] = F;
      packed[o + 1] = Fu * hu;
      packed[o + 2] = Fv * hv;
      packed[o + 3] = Fuu * hu * hu;
      packed[o + 4] = Fuv * hu * hv;
      packed[o + 5] = Fvv * hv * hv;
      packed[o + 6] = Fuuv * hu * hu * hv;
      packed[o + 7] = Fuvv * hu * hv * hv;
      packed[o + 8] = Fuuvv * hu * hu * hv * hv;
      packed[o + 9] = c.eta[k];
      packed[o + 10] = d * c.eta_d[k] * hu;
      packed[o + 11] = T * c.eta_t[k] * hv;
      packed[o + 12] = d * T * c.eta_dt[k] * hu * hv;
      // totals X, X_d, X_T, X_dT of n-reference (d N_A), P, U, S from the free energy
      const P = d * d * fd, Pd = 2 * d * fd + d * d * fdd, PT = d * d * fdt, PdT = 2 * d * fdt + d * d * fddt;
      const eps = f - T * ft, epsd = fd - T * fdt, epsT = -T * ftt, epsdT = -T * fdtt;
      const U = d * eps, Ud = eps + d * epsd, UT = d * epsT, UdT = epsT + d * epsdT;
      const S = -d * ft, Sd = -ft - d * fdt, ST = -d * ftt, SdT = -ftt - d * fdtt;
      const tot = [
        [d * AVOGADRO, AVOGADRO, 0, 0, c.positron_density],
        [P, Pd, PT, PdT, c.positron_pressure],
        [U, Ud, UT, UdT, c.positron_energy],
        [S, Sd, ST, SdT, c.positron_entropy],
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
        const p = o + 13 + 4 * q;
        packed[p] = Math.log(rr);
        packed[p + 1] = ((d * rd) / rr) * hu;
        packed[p + 2] = ((T * rT) / rr) * hv;
        packed[p + 3] = d * T * (rdT / rr - (rd * rT) / (rr * rr)) * hu * hv;
      }
    }
  }
  table.packed = packed;
  return table;
}

// ---------------------------------------------------------------------------------------------
// The interpolation kernel

/** tablePairGas succeeded. */
export const TABLE_OK = 0;
/** (d, T) outside the table's grid: `out` untouched except status; no extrapolation. */
export const TABLE_OUTSIDE = 1;

/**
 * The pair gas at (d = ρYe, T) from the table, in the same form as electron-positron.ts's pairGas
 * (totals per volume with ∂/∂d|_T and ∂/∂T|_d; positrons; electrons = total − positrons; η; n±).
 * Returns TABLE_OK or TABLE_OUTSIDE. No allocation.
 */
export function tablePairGas(table: FreeEnergyTable, d: number, T: number, out: PairGasState): number {
  const g = table.grid;
  const data = table.packed!;
  const nD = table.nD;
  const nT = table.nT;
  const u = Math.log(d);
  const v = Math.log(T);
  const invHu = g.pointsPerDecadeDensity / Math.LN10;
  const invHv = g.pointsPerDecadeTemperature / Math.LN10;
  const fx = (u - g.logDensityYeMin * Math.LN10) * invHu;
  const fy = (v - g.logTemperatureMin * Math.LN10) * invHv;
  if (!(fx >= -1e-9 && fx <= nD - 1 + 1e-9 && fy >= -1e-9 && fy <= nT - 1 + 1e-9)) return TABLE_OUTSIDE;
  let i = Math.floor(fx);
  let j = Math.floor(fy);
  if (i > nD - 2) i = nD - 2;
  if (j > nT - 2) j = nT - 2;
  if (i < 0) i = 0;
  if (j < 0) j = 0;
  const x = fx - i;
  const y = fy - j;
  const mx = 1 - x;
  const my = 1 - y;

  // quintic Hermite basis: values, first and second derivatives, left (…0) and right (…1) node
  const x2 = x * x, x3 = x2 * x, x4 = x3 * x, x5 = x4 * x;
  const m2 = mx * mx, m3 = m2 * mx, m4 = m3 * mx, m5 = m4 * mx;
  const a00 = 1 - 10 * x3 + 15 * x4 - 6 * x5, a01 = x - 6 * x3 + 8 * x4 - 3 * x5, a02 = 0.5 * (x2 - 3 * x3 + 3 * x4 - x5);
  const a10 = 1 - 10 * m3 + 15 * m4 - 6 * m5, a11 = -(mx - 6 * m3 + 8 * m4 - 3 * m5), a12 = 0.5 * (m2 - 3 * m3 + 3 * m4 - m5);
  const b00d = -30 * x2 + 60 * x3 - 30 * x4, b01d = 1 - 18 * x2 + 32 * x3 - 15 * x4, b02d = 0.5 * (2 * x - 9 * x2 + 12 * x3 - 5 * x4);
  const b10d = 30 * m2 - 60 * m3 + 30 * m4, b11d = 1 - 18 * m2 + 32 * m3 - 15 * m4, b12d = -0.5 * (2 * mx - 9 * m2 + 12 * m3 - 5 * m4);
  const c00 = -60 * x + 180 * x2 - 120 * x3, c01 = -36 * x + 96 * x2 - 60 * x3, c02 = 0.5 * (2 - 18 * x + 36 * x2 - 20 * x3);
  const c10 = -60 * mx + 180 * m2 - 120 * m3, c11 = -(-36 * mx + 96 * m2 - 60 * m3), c12 = 0.5 * (2 - 18 * mx + 36 * m2 - 20 * m3);
  const y2 = y * y, y3 = y2 * y, y4 = y3 * y, y5 = y4 * y;
  const n2 = my * my, n3 = n2 * my, n4 = n3 * my, n5 = n4 * my;
  const p00 = 1 - 10 * y3 + 15 * y4 - 6 * y5, p01 = y - 6 * y3 + 8 * y4 - 3 * y5, p02 = 0.5 * (y2 - 3 * y3 + 3 * y4 - y5);
  const p10 = 1 - 10 * n3 + 15 * n4 - 6 * n5, p11 = -(my - 6 * n3 + 8 * n4 - 3 * n5), p12 = 0.5 * (n2 - 3 * n3 + 3 * n4 - n5);
  const q00 = -30 * y2 + 60 * y3 - 30 * y4, q01 = 1 - 18 * y2 + 32 * y3 - 15 * y4, q02 = 0.5 * (2 * y - 9 * y2 + 12 * y3 - 5 * y4);
  const q10 = 30 * n2 - 60 * n3 + 30 * n4, q11 = 1 - 18 * n2 + 32 * n3 - 15 * n4, q12 = -0.5 * (2 * my - 9 * n2 + 12 * n3 - 5 * n4);
  const r00 = -60 * y + 180 * y2 - 120 * y3, r01 = -36 * y + 96 * y2 - 60 * y3, r02 = 0.5 * (2 - 18 * y + 36 * y2 - 20 * y3);
  const r10 = -60 * my + 180 * n2 - 120 * n3, r11 = -(-36 * my + 96 * n2 - 60 * n3), r12 = 0.5 * (2 - 18 * my + 36 * n2 - 20 * n3);

  let F = 0, Fx = 0, Fy = 0, Fxx = 0, Fxy = 0, Fyy = 0;
  // corner (i, j): x-basis a0*, y-basis p0*
  let o = (i * nT + j) * STRIDE;
  {
    const G0 = data[o] * p00 + data[o + 2] * p01 + data[o + 5] * p02;
    const G1 = data[o + 1] * p00 + data[o + 4] * p01 + data[o + 7] * p02;
    const G2 = data[o + 3] * p00 + data[o + 6] * p01 + data[o + 8] * p02;
    const H0 = data[o] * q00 + data[o + 2] * q01 + data[o + 5] * q02;
    const H1 = data[o + 1] * q00 + data[o + 4] * q01 + data[o + 7] * q02;
    const H2 = data[o + 3] * q00 + data[o + 6] * q01 + data[o + 8] * q02;
    const K0 = data[o] * r00 + data[o + 2] * r01 + data[o + 5] * r02;
    const K1 = data[o + 1] * r00 + data[o + 4] * r01 + data[o + 7] * r02;
    const K2 = data[o + 3] * r00 + data[o + 6] * r01 + data[o + 8] * r02;
    F += G0 * a00 + G1 * a01 + G2 * a02;
    Fx += G0 * b00d + G1 * b01d + G2 * b02d;
    Fxx += G0 * c00 + G1 * c01 + G2 * c02;
    Fy += H0 * a00 + H1 * a01 + H2 * a02;
    Fxy += H0 * b00d + H1 * b01d + H2 * b02d;
    Fyy += K0 * a00 + K1 * a01 + K2 * a02;
  }
  // corner (i+1, j)
  o = ((i + 1) * nT + j) * STRIDE;
  {
    const G0 = data[o] * p00 + data[o + 2] * p01 + data[o + 5] * p02;
    const G1 = data[o + 1] * p00 + data[o + 4] * p01 + data[o + 7] * p02;
    const G2 = data[o + 3] * p00 + data[o + 6] * p01 + data[o + 8] * p02;
    const H0 = data[o] * q00 + data[o + 2] * q01 + data[o + 5] * q02;
    const H1 = data[o + 1] * q00 + data[o + 4] * q01 + data[o + 7] * q02;
    const H2 = data[o + 3] * q00 + data[o + 6] * q01 + data[o + 8] * q02;
    const K0 = data[o] * r00 + data[o + 2] * r01 + data[o + 5] * r02;
    const K1 = data[o + 1] * r00 + data[o + 4] * r01 + data[o + 7] * r02;
    const K2 = data[o + 3] * r00 + data[o + 6] * r01 + data[o + 8] * r02;
    F += G0 * a10 + G1 * a11 + G2 * a12;
    Fx += G0 * b10d + G1 * b11d + G2 * b12d;
    Fxx += G0 * c10 + G1 * c11 + G2 * c12;
    Fy += H0 * a10 + H1 * a11 + H2 * a12;
    Fxy += H0 * b10d + H1 * b11d + H2 * b12d;
    Fyy += K0 * a10 + K1 * a11 + K2 * a12;
  }
  // corner (i, j+1)
  o = (i * nT + j + 1) * STRIDE;
  {
    const G0 = data[o] * p10 + data[o + 2] * p11 + data[o + 5] * p12;
    const G1 = data[o + 1] * p10 + data[o + 4] * p11 + data[o + 7] * p12;
    const G2 = data[o + 3] * p10 + data[o + 6] * p11 + data[o + 8] * p12;
    const H0 = data[o] * q10 + data[o + 2] * q11 + data[o + 5] * q12;
    const H1 = data[o + 1] * q10 + data[o + 4] * q11 + data[o + 7] * q12;
    const H2 = data[o + 3] * q10 + data[o + 6] * q11 + data[o + 8] * q12;
    const K0 = data[o] * r10 + data[o + 2] * r11 + data[o + 5] * r12;
    const K1 = data[o + 1] * r10 + data[o + 4] * r11 + data[o + 7] * r12;
    const K2 = data[o + 3] * r10 + data[o + 6] * r11 + data[o + 8] * r12;
    F += G0 * a00 + G1 * a01 + G2 * a02;
    Fx += G0 * b00d + G1 * b01d + G2 * b02d;
    Fxx += G0 * c00 + G1 * c01 + G2 * c02;
    Fy += H0 * a00 + H1 * a01 + H2 * a02;
    Fxy += H0 * b00d + H1 * b01d + H2 * b02d;
    Fyy += K0 * a00 + K1 * a01 + K2 * a02;
  }
  // corner (i+1, j+1)
  o = ((i + 1) * nT + j + 1) * STRIDE;
  {
    const G0 = data[o] * p10 + data[o + 2] * p11 + data[o + 5] * p12;
    const G1 = data[o + 1] * p10 + data[o + 4] * p11 + data[o + 7] * p12;
    const G2 = data[o + 3] * p10 + data[o + 6] * p11 + data[o + 8] * p12;
    const H0 = data[o] * q10 + data[o + 2] * q11 + data[o + 5] * q12;
    const H1 = data[o + 1] * q10 + data[o + 4] * q11 + data[o + 7] * q12;
    const H2 = data[o + 3] * q10 + data[o + 6] * q11 + data[o + 8] * q12;
    const K0 = data[o] * r10 + data[o + 2] * r11 + data[o + 5] * r12;
    const K1 = data[o + 1] * r10 + data[o + 4] * r11 + data[o + 7] * r12;
    const K2 = data[o + 3] * r10 + data[o + 6] * r11 + data[o + 8] * r12;
    F += G0 * a10 + G1 * a11 + G2 * a12;
    Fx += G0 * b10d + G1 * b11d + G2 * b12d;
    Fxx += G0 * c10 + G1 * c11 + G2 * c12;
    Fy += H0 * a10 + H1 * a11 + H2 * a12;
    Fxy += H0 * b10d + H1 * b11d + H2 * b12d;
    Fyy += K0 * a10 + K1 * a11 + K2 * a12;
  }
  // to u = ln d, v = ln T
  const Fu = Fx * invHu, Fv = Fy * invHv;
  const Fuu = Fxx * invHu * invHu, Fuv = Fxy * invHu * invHv, Fvv = Fyy * invHv * invHv;
  const invT = 1 / T;
  const P = d * Fu;
  const eps = F - Fv; // energy per unit mass of ρYe
  const sig = -Fv * invT; // entropy per unit mass of ρYe
  out.pressure = P;
  out.dPdD = Fu + Fuu;
  out.dPdT = d * Fuv * invT;
  out.energy = d * eps;
  out.dUdD = eps + Fu - Fuv; // ε + d ε_d
  out.dUdT = d * (Fv - Fvv) * invT;
  out.entropy = d * sig;
  out.dSdD = sig - Fuv * invT; // σ + d σ_d
  out.dSdT = d * (Fv - Fvv) * invT * invT;

  // bicubic Hermite for η and the positron shares: h00 = 2x³ − 3x² + 1, h10 = x³ − 2x² + x
  const e0 = 2 * x3 - 3 * x2 + 1, e1 = x3 - 2 * x2 + x, e2 = 1 - e0, e3 = -(m3 - 2 * m2 + mx);
  const e0d = 6 * x2 - 6 * x, e1d = 3 * x2 - 4 * x + 1, e2d = -e0d, e3d = 3 * m2 - 4 * mx + 1;
  const f0 = 2 * y3 - 3 * y2 + 1, f1 = y3 - 2 * y2 + y, f2 = 1 - f0, f3 = -(n3 - 2 * n2 + my);
  const f0d = 6 * y2 - 6 * y, f1d = 3 * y2 - 4 * y + 1, f2d = -f0d, f3d = 3 * n2 - 4 * my + 1;
  const oA = (i * nT + j) * STRIDE, oB = ((i + 1) * nT + j) * STRIDE, oC = (i * nT + j + 1) * STRIDE, oD = ((i + 1) * nT + j + 1) * STRIDE;
  // η (value only)
  {
    const q = 9;
    const A = data[oA + q] * f0 + data[oA + q + 2] * f1, Ax = data[oA + q + 1] * f0 + data[oA + q + 3] * f1;
    const B = data[oB + q] * f0 + data[oB + q + 2] * f1, Bx = data[oB + q + 1] * f0 + data[oB + q + 3] * f1;
    const C = data[oC + q] * f2 + data[oC + q + 2] * f3, Cx = data[oC + q + 1] * f2 + data[oC + q + 3] * f3;
    const D = data[oD + q] * f2 + data[oD + q + 2] * f3, Dx = data[oD + q + 1] * f2 + data[oD + q + 3] * f3;
    out.eta = (A + C) * e0 + (Ax + Cx) * e1 + (B + D) * e2 + (Bx + Dx) * e3;
  }
  out.detaDd = NaN;
  out.detaDT = NaN;
  // positron shares: L, ∂L/∂u, ∂L/∂v for n (of d N_A), P, U, S
  const pos = out.positrons;
  for (let s = 0; s < 4; s++) {
    const q = 13 + 4 * s;
    const A = data[oA + q] * f0 + data[oA + q + 2] * f1, Ax = data[oA + q + 1] * f0 + data[oA + q + 3] * f1;
    const B = data[oB + q] * f0 + data[oB + q + 2] * f1, Bx = data[oB + q + 1] * f0 + data[oB + q + 3] * f1;
    const C = data[oC + q] * f2 + data[oC + q + 2] * f3, Cx = data[oC + q + 1] * f2 + data[oC + q + 3] * f3;
    const D = data[oD + q] * f2 + data[oD + q + 2] * f3, Dx = data[oD + q + 1] * f2 + data[oD + q + 3] * f3;
    const Ay = data[oA + q] * f0d + data[oA + q + 2] * f1d, Axy = data[oA + q + 1] * f0d + data[oA + q + 3] * f1d;
    const By = data[oB + q] * f0d + data[oB + q + 2] * f1d, Bxy = data[oB + q + 1] * f0d + data[oB + q + 3] * f1d;
    const Cy = data[oC + q] * f2d + data[oC + q + 2] * f3d, Cxy = data[oC + q + 1] * f2d + data[oC + q + 3] * f3d;
    const Dy = data[oD + q] * f2d + data[oD + q + 2] * f3d, Dxy = data[oD + q + 1] * f2d + data[oD + q + 3] * f3d;
    const L = (A + C) * e0 + (Ax + Cx) * e1 + (B + D) * e2 + (Bx + Dx) * e3;
    const Lu = ((A + C) * e0d + (Ax + Cx) * e1d + (B + D) * e2d + (Bx + Dx) * e3d) * invHu;
    const Lv = ((Ay + Cy) * e0 + (Axy + Cxy) * e1 + (By + Dy) * e2 + (Bxy + Dxy) * e3) * invHv;
    const ex = Math.exp(L);
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
