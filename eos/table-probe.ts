/**
 * Table-method evaluations of many points at once for the batched inversions of invert.ts: the
 * caller sets up to TABLE_PROBE_CHUNK points' (ρ, T) and composition, `run` evaluates them in one
 * call of the WebAssembly loop (eos/wasm/, the same loop as evaluate's table method), and the
 * inversion reads what its search needs (a total, its T-derivative, the summed magnitudes of the
 * component terms) and stores a solved point's whole state into its result. No allocation per run.
 */
import { COMPONENT_NAMES, STATUS, storeMaxwellResiduals, tableBatchEngine, tableBatchFlags, type EvaluateResult, type IncludeFlags, type MixtureData } from './state.js';
import { OUTPUT_COLUMNS, OUTPUT_COMPONENT_COLUMNS, type TableBatchOutput } from './wasm/table-batch.js';
import type { FreeEnergyTable } from './free-energy-table.js';

/** Points per run (as evaluate's chunks: the loop's outputs stay in the core's L2 cache). */
export const TABLE_PROBE_CHUNK = 512;

const TOTALS = OUTPUT_COLUMNS.length;
const PER_COMPONENT = OUTPUT_COMPONENT_COLUMNS.length;
/** Column indices in the loop's output. */
export const COLUMN = Object.freeze({
  pressure: 0, specificEnergy: 1, specificEntropy: 2, dPdRho: 3, dPdT: 4, dEdRho: 5, dEdT: 6, dSdRho: 7, dSdT: 8,
  eta: OUTPUT_COLUMNS.indexOf('eta'),
});
/** Component indices (the loop's order, that of COMPONENT_NAMES). */
export const COMPONENT = Object.freeze({ electrons: 0, positrons: 1, ions: 2, photons: 3, coulomb: 4 });

export class TableProbeBatch {
  readonly density = new Float64Array(TABLE_PROBE_CHUNK);
  readonly temperature = new Float64Array(TABLE_PROBE_CHUNK);
  readonly abar = new Float64Array(TABLE_PROBE_CHUNK);
  readonly zbar = new Float64Array(TABLE_PROBE_CHUNK);
  readonly zmax = new Float64Array(TABLE_PROBE_CHUNK);
  /** Each point's row in the mixture's abundances (when there is a mixture). */
  readonly row = new Int32Array(TABLE_PROBE_CHUNK);
  private readonly columns = [this.density, this.temperature, this.abar, this.zbar, this.zmax];
  private readonly flags: number;
  private readonly mixtureRows: MixtureData | null;
  private out: TableBatchOutput | null = null;
  private res: EvaluateResult | null = null;
  private targets: Float64Array[] = [];

  constructor(readonly table: FreeEnergyTable, include: IncludeFlags, relativistic: boolean, private readonly mixture: MixtureData | null) {
    // the breakdown is always on: the searches need the component terms' magnitudes
    this.flags = tableBatchFlags(include, relativistic, true);
    this.mixtureRows = mixture === null ? null : { count: mixture.count, z53: mixture.z53, y: new Float64Array(TABLE_PROBE_CHUNK * mixture.count) };
  }

  /** Evaluates points 0..n−1. */
  run(n: number): void {
    const mix = this.mixtureRows;
    if (mix !== null) {
      const m = mix.count, src = this.mixture!.y;
      for (let k = 0; k < n; k++) mix.y.set(src.subarray(this.row[k] * m, (this.row[k] + 1) * m), k * m);
    }
    this.out = tableBatchEngine().run(this.table, 0, n, this.columns, this.flags, mix);
  }

  /** STATUS.OK, or STATUS.TABLE_OUT_OF_RANGE (as PointKernel.compute says for the table method). */
  status(k: number): number {
    const o = this.out!;
    return o.bytes[o.statusAt + k] === 0 ? STATUS.OK : STATUS.TABLE_OUT_OF_RANGE;
  }

  /** Output column c (COLUMN) of point k. */
  value(k: number, c: number): number {
    const o = this.out!;
    return o.values[o.valuesAt + c * o.stride + k];
  }

  /** Column c (c < 9) of component j (COMPONENT; 0 where left out) of point k. */
  componentValue(k: number, j: number, c: number): number {
    const o = this.out!;
    return o.values[o.valuesAt + (TOTALS + PER_COMPONENT * j + c) * o.stride + k];
  }

  /** Σ over the components of |column c| (c < 9; components left out are 0): the rounding-floor scale. */
  magnitude(k: number, c: number): number {
    const o = this.out!;
    const v = o.values, s = o.stride;
    let at = o.valuesAt + (TOTALS + c) * s + k;
    let sum = 0;
    for (let j = 0; j < COMPONENT_NAMES.length; j++, at += PER_COMPONENT * s) sum += Math.abs(v[at]);
    return sum;
  }

  /** The result `store` writes into, its output columns in the loop's order (property lookups once, not per point). */
  bind(res: EvaluateResult): void {
    this.res = res;
    this.targets = OUTPUT_COLUMNS.map((c) => res[c]);
    if (res.breakdown) for (const comp of COMPONENT_NAMES) for (const c of OUTPUT_COMPONENT_COLUMNS) this.targets.push(res.components[comp][c]);
  }

  /** Point k's state into row i of the bound result (whose density and temperature hold the point's already). */
  store(i: number, k: number): void {
    const o = this.out!, res = this.res!, targets = this.targets;
    const v = o.values, s = o.stride;
    let at = o.valuesAt + k;
    for (let c = 0; c < targets.length; c++, at += s) targets[c][i] = v[at];
    res.warnings[i] = o.bytes[o.warningsAt + k];
    if (res.maxwell) {
      storeMaxwellResiduals(res.maxwell, i, res.density[i], res.temperature[i], res.pressure[i], res.dPdT[i], res.dEdRho[i], res.dEdT[i], res.dSdRho[i], res.dSdT[i]);
    }
  }
}
