/**
 * The free-energy table (eos/free-energy-table.ts; method of Timmes & Swesty 2000, ApJS 126, 501)
 * as an HDF5 file, written and read with h5wasm (HDF5 via WebAssembly); Debian's `h5dump` reads it.
 *
 * Layout (our own names; every name says what it holds, so the file describes itself):
 *   /                       attributes: format, format_version, model_version, constants_set,
 *                           constants (JSON of eos/constants.ts's record), the grid
 *                           (log_density_ye_min/max, log_temperature_min/max,
 *                           points_per_decade_density/temperature, n_density, n_temperature,
 *                           refined_temperature_min/max/points_per_decade: the denser band of the
 *                           piecewise-uniform T axis, NaN/NaN/0 when it is uniform),
 *                           built_at, build_seconds, build_workers, builder, build_parameters (JSON),
 *                           accuracy_report (JSON of the AccuracyReport, or "null"), index_order
 *   /grid/log_density_ye    float64 [n_density]     log10 of ρ·Ye in g/cm³ at the nodes
 *   /grid/log_temperature   float64 [n_temperature] log10 of T in K at the nodes (uniform pieces)
 *   /columns/<name>         float64 [n_density, n_temperature], one per TABLE_COLUMNS entry
 *                           (physical d = ρYe and T derivatives), attribute `description`
 *   /accuracy               attributes <quantity>_max / _median / _p99 (relative errors), a
 *                           copy of the report's figures for readers without a JSON parser
 * Columns round-trip bit for bit (IEEE float64 little-endian, no lossy filter). `readTable`
 * returns the table object `prepareTable` expects, already prepared for `evaluate`.
 *
 * eos/ never imports this folder: the physics library stays free of I/O.
 */

import type H5wasm from 'h5wasm/node';
import { constants as constantRecord } from '../eos/constants.js';
import {
  TABLE_COLUMNS, TABLE_FORMAT, TABLE_FORMAT_VERSION, gridSize, nodeLogDensityYe, nodeLogTemperature, prepareTable, resolveGrid, validateGrid,
  type AccuracyReport, type FreeEnergyTable, type TableColumnName, type TableGrid,
} from '../eos/free-energy-table.js';

/** Extra facts about how a table was built, stored as the `build_parameters` JSON attribute. */
export type BuildParameters = Record<string, string | number | boolean | null>;

const COLUMN_DESCRIPTIONS: Record<string, string> = {
  free_energy: 'Helmholtz free energy per unit mass of rho*Ye, f = (U - TS)/d [erg/g]',
  eta: 'electron degeneracy parameter eta = mu/(kT) (without rest mass)',
  positron_density: 'positron number density [1/cm^3]',
  positron_pressure: 'positron pressure [erg/cm^3]',
  positron_energy: 'positron energy density [erg/cm^3]',
  positron_entropy: 'positron entropy density [erg/(K cm^3)]',
};

function describeColumn(name: string): string {
  const m = /^(.*?)(?:_(d+t*|t+))?$/.exec(name)!;
  const base = COLUMN_DESCRIPTIONS[m[1]] ?? m[1];
  if (!m[2]) return base;
  const nd = (m[2].match(/d/g) ?? []).length;
  const nt = (m[2].match(/t/g) ?? []).length;
  const parts = [nd ? `d${nd > 1 ? `^${nd}` : ''}` : '', nt ? `T${nt > 1 ? `^${nt}` : ''}` : ''].filter(Boolean).join(' ');
  return `partial derivative (${parts}; d = rho*Ye in g/cm^3, T in K) of: ${base}`;
}

/** JSON that keeps NaN and ±Infinity (the accuracy report may hold them when a quantity had no valid point). */
function toJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v));
}
function fromJson(text: string): unknown {
  return JSON.parse(text, (_k, v) => (v === 'NaN' ? NaN : v === 'Infinity' ? Infinity : v === '-Infinity' ? -Infinity : v));
}

let ready: Promise<typeof H5wasm> | null = null;
/**
 * h5wasm loads its WebAssembly module once per thread. Imported dynamically: h5wasm/node is an
 * ES module with top-level await, which a static import would force on every importer (the
 * gateway's worker threads load their module graph with require() under tsx).
 */
async function h5(): Promise<typeof H5wasm> {
  ready ??= import('h5wasm/node').then(async (m) => {
    await m.default.ready;
    return m.default;
  });
  return ready;
}

/**
 * Writes `table` to `file` (overwriting it). Not atomic by itself: eos-tables/build.ts writes to a
 * temporary name and renames.
 */
export async function writeTable(file: string, table: FreeEnergyTable, buildParameters: BuildParameters = {}): Promise<void> {
  const lib = await h5();
  const { nD, nT, grid } = table;
  const size = gridSize(grid);
  if (size.nD !== nD || size.nT !== nT) throw new Error(`writeTable: table size ${nD}×${nT} does not match its grid (${size.nD}×${size.nT})`);
  const f = new lib.File(file, 'w');
  try {
    f.create_attribute('format', table.format);
    f.create_attribute('format_version', table.formatVersion, null, '<i4');
    f.create_attribute('model_version', table.modelVersion);
    f.create_attribute('constants_set', table.constantsSet);
    f.create_attribute('constants', toJson(constantRecord));
    f.create_attribute('log_density_ye_min', grid.logDensityYeMin);
    f.create_attribute('log_density_ye_max', grid.logDensityYeMax);
    f.create_attribute('log_temperature_min', grid.logTemperatureMin);
    f.create_attribute('log_temperature_max', grid.logTemperatureMax);
    f.create_attribute('points_per_decade_density', grid.pointsPerDecadeDensity);
    f.create_attribute('points_per_decade_temperature', grid.pointsPerDecadeTemperature);
    // the denser T band (format version 3): NaN bounds and 0 points per decade when the T axis is uniform
    const band = resolveGrid(grid).refinedTemperature;
    f.create_attribute('refined_temperature_min', band ? band.logTemperatureMin : NaN);
    f.create_attribute('refined_temperature_max', band ? band.logTemperatureMax : NaN);
    f.create_attribute('refined_temperature_points_per_decade', band ? band.pointsPerDecade : 0);
    f.create_attribute('n_density', nD, null, '<i4');
    f.create_attribute('n_temperature', nT, null, '<i4');
    f.create_attribute('built_at', table.build.builtAt);
    f.create_attribute('build_seconds', table.build.seconds);
    f.create_attribute('build_workers', table.build.workers, null, '<i4');
    f.create_attribute('builder', table.build.builder);
    f.create_attribute('build_parameters', toJson(buildParameters));
    f.create_attribute('accuracy_report', toJson(table.accuracy));
    f.create_attribute('index_order', 'columns/<name>[i][j]: i along grid/log_density_ye, j along grid/log_temperature');

    const g = f.create_group('grid');
    const ld = new Float64Array(nD);
    for (let i = 0; i < nD; i++) ld[i] = nodeLogDensityYe(grid, i);
    const lt = new Float64Array(nT);
    for (let j = 0; j < nT; j++) lt[j] = nodeLogTemperature(grid, j);
    g.create_dataset({ name: 'log_density_ye', data: ld, shape: [nD], dtype: '<d' });
    g.create_dataset({ name: 'log_temperature', data: lt, shape: [nT], dtype: '<d' });

    const c = f.create_group('columns');
    for (const name of TABLE_COLUMNS) {
      const col = table.columns[name];
      if (!(col instanceof Float64Array) || col.length !== nD * nT) throw new Error(`writeTable: column ${name} must be a Float64Array of ${nD * nT} values`);
      const ds = c.create_dataset({ name, data: col, shape: [nD, nT], dtype: '<d' });
      ds.create_attribute('description', describeColumn(name));
    }

    const a = f.create_group('accuracy');
    a.create_attribute('definition', 'relative errors |table - exact|/|exact| of the pair gas at off-grid points (eta: |d eta|/max(1,|eta|)); JSON in /accuracy_report');
    if (table.accuracy) {
      for (const [q, s] of Object.entries(table.accuracy.quantities)) {
        a.create_attribute(`${q}_max`, s.max);
        a.create_attribute(`${q}_median`, s.median);
        a.create_attribute(`${q}_p99`, s.p99);
      }
      a.create_attribute('maxwell_max', table.accuracy.maxwellMax);
    }
  } finally {
    f.close();
  }
}

/**
 * Only the accuracy report of a table file (the `accuracy_report` attribute), without reading the
 * columns: what the gateway's main thread puts in response metadata.
 */
export async function readTableAccuracy(file: string): Promise<AccuracyReport | null> {
  const lib = await h5();
  const f = new lib.File(file, 'r');
  try {
    const format = f.attrs['format']?.value;
    if (format !== TABLE_FORMAT) throw new Error(`${file}: not a Fermiwell free-energy table (format ${JSON.stringify(format ?? null)})`);
    const report = f.attrs['accuracy_report'];
    return report ? (fromJson(String(report.value)) as AccuracyReport | null) : null;
  } finally {
    f.close();
  }
}

/** What `readTable` found in the file besides the table itself. */
export interface TableFileInfo {
  buildParameters: BuildParameters;
  constants: Record<string, unknown>;
}

/**
 * Reads a table written by `writeTable`; returns it prepared (packed kernel data derived), ready
 * for `evaluate(input, { method: 'table', table })`. Throws an Error naming the file and what is
 * wrong when the file is not such a table.
 */
export async function readTable(file: string): Promise<FreeEnergyTable> {
  return (await readTableWithInfo(file)).table;
}

export async function readTableWithInfo(file: string): Promise<{ table: FreeEnergyTable; info: TableFileInfo }> {
  const lib = await h5();
  const f = new lib.File(file, 'r');
  try {
    const attr = (name: string) => {
      const a = f.attrs[name];
      if (!a) throw new Error(`${file}: not a Fermiwell free-energy table (attribute "${name}" missing); delete it and rebuild it`);
      return a.value;
    };
    const num = (name: string) => {
      const v = attr(name);
      const n = typeof v === 'bigint' ? Number(v) : v;
      if (typeof n !== 'number') throw new Error(`${file}: attribute "${name}" is not a number`);
      return n;
    };
    const str = (name: string) => String(attr(name));
    const format = str('format');
    const formatVersion = num('format_version');
    if (format !== TABLE_FORMAT) throw new Error(`${file}: format "${format}", expected "${TABLE_FORMAT}"`);
    if (formatVersion !== TABLE_FORMAT_VERSION) throw new Error(`${file}: format version ${formatVersion}, this code reads ${TABLE_FORMAT_VERSION}; rebuild the table`);
    const grid: TableGrid = {
      logDensityYeMin: num('log_density_ye_min'),
      logDensityYeMax: num('log_density_ye_max'),
      logTemperatureMin: num('log_temperature_min'),
      logTemperatureMax: num('log_temperature_max'),
      pointsPerDecadeDensity: num('points_per_decade_density'),
      pointsPerDecadeTemperature: num('points_per_decade_temperature'),
      refinedTemperature: num('refined_temperature_points_per_decade') > 0
        ? { logTemperatureMin: num('refined_temperature_min'), logTemperatureMax: num('refined_temperature_max'), pointsPerDecade: num('refined_temperature_points_per_decade') }
        : null,
    };
    validateGrid(grid);
    const { nD, nT } = gridSize(grid);
    if (num('n_density') !== nD || num('n_temperature') !== nT) throw new Error(`${file}: n_density × n_temperature = ${num('n_density')}×${num('n_temperature')} disagrees with the grid (${nD}×${nT})`);
    const columns = {} as Record<TableColumnName, Float64Array>;
    for (const name of TABLE_COLUMNS) {
      const ds = f.get(`columns/${name}`);
      if (!(ds instanceof lib.Dataset)) throw new Error(`${file}: dataset columns/${name} missing`);
      const shape = ds.shape;
      if (!shape || shape.length !== 2 || shape[0] !== nD || shape[1] !== nT) throw new Error(`${file}: columns/${name} has shape ${JSON.stringify(shape)}, expected [${nD}, ${nT}]`);
      const v = ds.value;
      if (!(v instanceof Float64Array)) throw new Error(`${file}: columns/${name} is not float64`);
      columns[name] = v;
    }
    const table: FreeEnergyTable = {
      format,
      formatVersion,
      modelVersion: str('model_version'),
      constantsSet: str('constants_set'),
      grid,
      nD,
      nT,
      columns,
      accuracy: fromJson(str('accuracy_report')) as AccuracyReport | null,
      build: { builtAt: str('built_at'), seconds: num('build_seconds'), workers: num('build_workers'), builder: str('builder') },
    };
    const info: TableFileInfo = {
      buildParameters: fromJson(str('build_parameters')) as BuildParameters,
      constants: fromJson(str('constants')) as Record<string, unknown>,
    };
    prepareTable(table);
    return { table, info };
  } finally {
    f.close();
  }
}
