/**
 * The WebAssembly table loop (eos/wasm/assembly/table-batch.ts, built by scripts/build-wasm.ts):
 * one instance per thread, created on first use, with the table copied into its memory once per
 * table and the batch's inputs and outputs in its memory. state.ts fills the result from it.
 * No I/O: the module's bytes come from the generated TypeScript module.
 */
import { TABLE_BATCH_WASM } from './generated/table-batch-wasm.js';
import type { FreeEnergyTable } from '../free-energy-table.js';

/** Output columns, in the order the module writes them (see the module's header). */
export const OUTPUT_COLUMNS = [
  'pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT',
  'dPdAbar', 'dPdZbar', 'dEdAbar', 'dEdZbar',
  'cv', 'cp', 'gamma1', 'gamma3', 'chiRho', 'chiT', 'nablaAd', 'soundSpeed', 'eta', 'electronDensity', 'positronDensity',
  'coulombGamma', 'radiationPressureFraction',
] as const;
/** Per component (electrons, positrons, ions, photons, Coulomb, in that order), after OUTPUT_COLUMNS. */
export const OUTPUT_COMPONENT_COLUMNS = ['pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT'] as const;
const COLUMN_COUNT = OUTPUT_COLUMNS.length + 5 * OUTPUT_COMPONENT_COLUMNS.length;

/** The physical constants the module needs, in the order of its setConstants. */
const CONSTANT_ORDER = [
  'avogadro', 'boltzmannK', 'electronRestEnergy', 'radiationA', 'ionGasConstant', 'lnIonQuantumConcentration', 'speedOfLight2',
  'pairZC', 'lnKOverMec2', 'lnHalfAvogadro', 'lnShareFloor', 'e2OverK', 'fourPiOver3Avogadro', 'ocpA3', 'invSqrtA2', 'halfLnA2',
  'rydberg', 'sahaFactor', 'bohrRadius',
] as const;
export type TableBatchConstants = Record<(typeof CONSTANT_ORDER)[number], number>;

/** Flags of evaluateBatch. */
export const FLAG = Object.freeze({ electrons: 1, positrons: 2, ions: 4, photons: 8, coulomb: 16, relativistic: 32, breakdown: 64 });

/** Node's WebAssembly global (typed here: the DOM library that declares it is not in this project's lib). */
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: unknown };
}
const wasm = (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;

interface Exports {
  memory: { buffer: ArrayBuffer; grow(pages: number): number };
  heapBase(): number;
  setConstants(p: number): void;
  setTable(data: number, cold: number, axis: number, nD: number, nT: number, logDMin: number, ppdD: number): void;
  evaluateBatch(n: number, stride: number, inp: number, out: number, warn: number, status: number, flags: number, species: number, z53: number, y: number): void;
}

/**
 * Where a batch's results are: views of the module's whole memory (replaced when it grows; valid
 * until the next run) and the index of each block in them. One object per instance, reused.
 */
export interface TableBatchOutput {
  /** COLUMN_COUNT blocks of `stride` values from `valuesAt` (the first n of each used): OUTPUT_COLUMNS, then the components' columns. */
  values: Float64Array;
  valuesAt: number;
  stride: number;
  /** n warning bytes from `warningsAt`, n status bytes from `statusAt` (0 computed, 1 density or temperature outside the domain, 2 outside the table). */
  bytes: Uint8Array;
  warningsAt: number;
  statusAt: number;
}

const align = (x: number) => Math.ceil(x / 64) * 64;

export class TableBatch {
  private readonly ex: Exports;
  private readonly tableBase: number;
  private table: FreeEnergyTable | null = null;
  private batchBase = 0;
  /** Views of the whole memory, made again only when it grows (a view costs more than a one-point batch's copies). */
  private f64 = new Float64Array(0);
  private readonly out: TableBatchOutput = { values: this.f64, valuesAt: 0, stride: 0, bytes: new Uint8Array(0), warningsAt: 0, statusAt: 0 };

  constructor(constants: TableBatchConstants) {
    const module = new wasm.Module(Buffer.from(TABLE_BATCH_WASM, 'base64'));
    this.ex = new wasm.Instance(module, { env: { abort: () => { throw new Error('table batch module aborted'); } } }).exports as unknown as Exports;
    const base = align(this.ex.heapBase());
    this.reserve(base + 8 * CONSTANT_ORDER.length);
    this.f64.set(CONSTANT_ORDER.map((k) => constants[k]), base / 8);
    this.ex.setConstants(base);
    this.tableBase = align(base + 8 * CONSTANT_ORDER.length);
  }

  private reserve(end: number): void {
    const mem = this.ex.memory;
    if (end > mem.buffer.byteLength) mem.grow(Math.ceil((end - mem.buffer.byteLength) / 65536));
    if (this.f64.buffer !== mem.buffer) {
      this.f64 = this.out.values = new Float64Array(mem.buffer);
      this.out.bytes = new Uint8Array(mem.buffer);
    }
  }

  /** Copies the table's kernel arrays into the module's memory (once per table object). */
  private useTable(table: FreeEnergyTable): void {
    if (this.table === table) return;
    const packed = table.packed!, cold = table.packedCold!, axis = table.packedAxis!;
    const pData = this.tableBase, pCold = align(pData + packed.byteLength), pAxis = align(pCold + cold.byteLength);
    this.batchBase = align(pAxis + axis.byteLength);
    this.reserve(this.batchBase);
    this.f64.set(packed, pData / 8);
    this.f64.set(cold, pCold / 8);
    this.f64.set(axis, pAxis / 8);
    this.ex.setTable(pData, pCold, pAxis, table.nD, table.nT, table.grid.logDensityYeMin, table.grid.pointsPerDecadeDensity);
    this.table = table;
  }

  /**
   * Evaluates the points [from, from + n) of columns rho, T, abar, zbar, zmax. mixture: the nuclide
   * mixture of the Coulomb term (coulomb.ts; abundances row-major over all points), or null for one
   * species of charge Zbar. The caller keeps n moderate (memory grows to ~0.6 KB per point).
   */
  run(table: FreeEnergyTable, from: number, n: number, columns: readonly Float64Array[], flags: number,
    mixture: { count: number; z53: Float64Array; y: Float64Array } | null): TableBatchOutput {
    this.useTable(table);
    const m = mixture === null ? 0 : mixture.count;
    // columns n + 8 apart: a power-of-two spacing (n = 512 → 4 KB) would put every column of a
    // point in the same L1 cache set (measured: twice the time per point with the breakdown's 71)
    const stride = n + 8;
    const pIn = this.batchBase, pOut = align(pIn + 40 * stride), pZ = align(pOut + 8 * COLUMN_COUNT * stride), pY = align(pZ + 8 * m);
    const pWarn = align(pY + 8 * m * n), pStatus = align(pWarn + n);
    this.reserve(pStatus + n);
    const f64 = this.f64, at = pIn / 8;
    for (let c = 0; c < 5; c++) {
      const col = columns[c];
      if (n <= 16) for (let i = 0; i < n; i++) f64[at + c * stride + i] = col[from + i];
      else f64.set(col.subarray(from, from + n), at + c * stride);
    }
    if (mixture !== null) {
      f64.set(mixture.z53, pZ / 8);
      f64.set(mixture.y.subarray(from * m, (from + n) * m), pY / 8);
    }
    this.ex.evaluateBatch(n, stride, pIn, pOut, pWarn, pStatus, flags, m, pZ, pY);
    const out = this.out;
    out.valuesAt = pOut / 8;
    out.stride = stride;
    out.warningsAt = pWarn;
    out.statusAt = pStatus;
    return out;
  }
}
