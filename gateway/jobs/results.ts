/**
 * A finished batch job's results as files, assembled from its chunks in point order.
 *
 * CSV: one header line — the input columns as uploaded, then the output fields (an output that
 * repeats an input column, e.g. density of an inversion, is written once, as the input), then
 * `status` (the per-point status code of POST /v1/eos/evaluate; 0 = computed), then `warningFlags`
 * (the per-point physics-warning bits of evaluate's `warningFlags`: 1 PARTIAL_IONIZATION,
 * 2 NEUTRON_DRIP, 4 CRYSTALLIZED, 8 NON_POSITIVE_PRESSURE, 16 MECHANICALLY_UNSTABLE, 32 QUANTUM_IONS;
 * 0 = none; an empty cell = not recorded, for chunks computed before warnings were stored).
 * Numbers are written in JavaScript's shortest round-trip form, so parsing them gives back the exact
 * float64; a value that is not a finite number is an empty cell. Units CGS, as in the API (README "Jobs").
 *
 * HDF5 (h5wasm): root attributes `format` ("fermiwell batch results"), `format_version`, `job_id`,
 * `model_version`, `constants_set`, `operation`, `method`, `components` and `composition` (JSON);
 * `/inputs/<column>` and `/results/<field>` float64 [n] with a `units` attribute; `/status` uint8 [n];
 * `/warningFlags` uint8 [n] (same bits). format_version 2 added `/warningFlags`; when some point's
 * warnings were not recorded the dataset is left out and the root attribute `warning_flags` says so.
 *
 * The job's summary (jobs.result, GET /v1/jobs/{id}) counts statuses and warnings: `warningCounts`
 * (points per warning name) and `warned` (points with any warning); null when not recorded.
 */
import * as eos from '../../eos/index.js';
import { UNITS } from '../eos/fields.js';
import { bufferFromFile, h5 } from './hdf5.js';
import { UPLOAD_UNITS } from './upload.js';

export const RESULTS_FORMAT = 'fermiwell batch results';
/** 2: `/warningFlags` added. */
export const RESULTS_FORMAT_VERSION = 2;

export interface AssembledResults {
  n: number;
  inputs: Record<string, Float64Array>;
  outputs: Record<string, Float64Array>;
  status: Uint8Array;
  /** Per-point warning bits (eos WARNING; 0 where not recorded). */
  warningFlags: Uint8Array;
  /** 1 where a point's warning bits were recorded, 0 where not; null when every point's were. */
  warningFlagsRecorded: Uint8Array | null;
}

/** A stored chunk as assemble reads it; warning_flags null or absent = not recorded (stored before migration 008). */
export interface StoredChunk {
  points: number;
  input: Buffer;
  result: Buffer | null;
  status: Buffer | null;
  warning_flags?: Buffer | null;
}

export interface ResultsRequest {
  operation: string;
  inputColumns: string[];
  outputColumns: string[];
  method: string;
  components: string[];
  composition: unknown;
}

/** Float64 LE columns, one after another, as stored in job_chunks. */
export function packColumns(columns: Float64Array[], n: number): Buffer {
  const out = Buffer.alloc(columns.length * n * 8);
  columns.forEach((col, c) => {
    for (let i = 0; i < n; i++) out.writeDoubleLE(col.length === 1 ? col[0]! : col[i]!, (c * n + i) * 8);
  });
  return out;
}

export function unpackColumns(bytes: Buffer, count: number, n: number): Float64Array[] {
  const cols: Float64Array[] = [];
  for (let c = 0; c < count; c++) {
    const col = new Float64Array(n);
    for (let i = 0; i < n; i++) col[i] = bytes.readDoubleLE((c * n + i) * 8);
    cols.push(col);
  }
  return cols;
}

export function assemble(request: ResultsRequest, chunks: StoredChunk[]): AssembledResults {
  const n = chunks.reduce((s, c) => s + c.points, 0);
  const inputs = Object.fromEntries(request.inputColumns.map((name) => [name, new Float64Array(n)]));
  const outputs = Object.fromEntries(request.outputColumns.map((name) => [name, new Float64Array(n)]));
  const status = new Uint8Array(n);
  const warningFlags = new Uint8Array(n);
  const recorded = new Uint8Array(n);
  let offset = 0;
  for (const chunk of chunks) {
    if (!chunk.result || !chunk.status) throw new Error('assemble: a chunk has no result yet');
    unpackColumns(chunk.input, request.inputColumns.length, chunk.points).forEach((col, c) => inputs[request.inputColumns[c]!]!.set(col, offset));
    unpackColumns(chunk.result, request.outputColumns.length, chunk.points).forEach((col, c) => outputs[request.outputColumns[c]!]!.set(col, offset));
    status.set(chunk.status, offset);
    if (chunk.warning_flags && chunk.warning_flags.length === chunk.points) {
      warningFlags.set(chunk.warning_flags, offset);
      recorded.fill(1, offset, offset + chunk.points);
    }
    offset += chunk.points;
  }
  return { n, inputs, outputs, status, warningFlags, warningFlagsRecorded: recorded.every((r) => r === 1) ? null : recorded };
}

const cell = (x: number) => (Number.isFinite(x) ? String(x) : '');

export function resultsCsv(results: AssembledResults): Buffer {
  const inputNames = Object.keys(results.inputs);
  const outputNames = Object.keys(results.outputs).filter((name) => !inputNames.includes(name));
  const cols = [...inputNames.map((k) => results.inputs[k]!), ...outputNames.map((k) => results.outputs[k]!)];
  const lines: string[] = [[...inputNames, ...outputNames, 'status', 'warningFlags'].join(',')];
  const recorded = results.warningFlagsRecorded;
  for (let i = 0; i < results.n; i++) {
    const row: string[] = new Array(cols.length + 2);
    for (let c = 0; c < cols.length; c++) row[c] = cell(cols[c]![i]!);
    row[cols.length] = String(results.status[i]);
    row[cols.length + 1] = recorded && !recorded[i] ? '' : String(results.warningFlags[i]);
    lines.push(row.join(','));
  }
  return Buffer.from(lines.join('\n') + '\n', 'utf8');
}

export async function resultsHdf5(results: AssembledResults, request: ResultsRequest, jobId: string): Promise<Buffer> {
  const lib = await h5();
  return bufferFromFile((file) => {
    const f = new lib.File(file, 'w');
    try {
      f.create_attribute('format', RESULTS_FORMAT);
      f.create_attribute('format_version', RESULTS_FORMAT_VERSION, null, '<i4');
      f.create_attribute('job_id', jobId);
      f.create_attribute('model_version', eos.MODEL_VERSION);
      f.create_attribute('constants_set', eos.constants.CONSTANTS_SET);
      f.create_attribute('operation', request.operation);
      f.create_attribute('method', request.method);
      f.create_attribute('components', JSON.stringify(request.components));
      f.create_attribute('composition', JSON.stringify(request.composition ?? null));
      f.create_attribute('points', results.n, null, '<i8');
      const inputs = f.create_group('inputs');
      for (const [name, col] of Object.entries(results.inputs)) {
        inputs.create_dataset({ name, data: col, shape: [results.n], dtype: '<d' }).create_attribute('units', UPLOAD_UNITS[name] ?? '');
      }
      const outputs = f.create_group('results');
      for (const [name, col] of Object.entries(results.outputs)) {
        outputs.create_dataset({ name, data: col, shape: [results.n], dtype: '<d' }).create_attribute('units', UNITS[name] ?? '');
      }
      f.create_dataset({ name: 'status', data: results.status, shape: [results.n], dtype: '<B' }).create_attribute('meaning', 'per-point status code of POST /v1/eos/evaluate (0 = computed); see the OpenAPI document');
      if (results.warningFlagsRecorded === null) {
        f.create_dataset({ name: 'warningFlags', data: results.warningFlags, shape: [results.n], dtype: '<B' }).create_attribute('meaning', WARNING_FLAGS_MEANING);
      } else {
        const missing = results.warningFlagsRecorded.reduce((k, r) => k + (r ? 0 : 1), 0);
        f.create_attribute('warning_flags', `not recorded for ${missing} of ${results.n} points (computed before per-point warnings were stored), so /warningFlags is left out; absent does not mean no warnings`);
      }
    } finally {
      f.close();
    }
  });
}

/** The bits of warningFlags, as the attribute of /warningFlags says them. */
export const WARNING_FLAGS_MEANING = `per-point physics-warning bits of POST /v1/eos/evaluate's warningFlags (0 = none; several may be set): ${Object.entries(eos.WARNING)
  .map(([name, bit]) => `${bit} ${name}`)
  .join(', ')}; see the OpenAPI document`;

/**
 * The warnings part of a job's summary: points per warning name (only names that occur) and points
 * with any warning, over the points whose warnings were recorded; both null when none were
 * (`warningFlagsUnrecorded` counts the points without them when only some lack them).
 */
export function warningSummary(results: AssembledResults): { warningCounts: Record<string, number> | null; warned: number | null; warningFlagsUnrecorded?: number } {
  const recorded = results.warningFlagsRecorded;
  const counts: Record<string, number> = {};
  let warned = 0;
  let unrecorded = 0;
  for (let i = 0; i < results.n; i++) {
    if (recorded && !recorded[i]) {
      unrecorded++;
      continue;
    }
    const bits = results.warningFlags[i]!;
    if (bits === 0) continue;
    warned++;
    for (const name of eos.decodeWarnings(bits)) counts[name] = (counts[name] ?? 0) + 1;
  }
  if (results.n > 0 && unrecorded === results.n) return { warningCounts: null, warned: null };
  return { warningCounts: counts, warned, ...(unrecorded > 0 ? { warningFlagsUnrecorded: unrecorded } : {}) };
}

/** How many points ended with each status code (the job's result summary). */
export function statusCounts(status: Uint8Array): Record<string, number> {
  const counts: Record<string, number> = {};
  for (const s of status) counts[s] = (counts[s] ?? 0) + 1;
  return counts;
}
