/**
 * What the service sends to a worker thread and what comes back (structured clone; every typed
 * array's buffer is transferred, never copied). One task is one chunk of a batch: the service
 * splits large batches so several threads work on one request and small requests never wait
 * behind a large one.
 */
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';

export type Operation = 'evaluate' | 'invert' | 'regime';

/** How the worker returns numeric columns: typed arrays (binary form, GraphQL) or JSON text. */
export type Encoding = 'typed' | 'json';

export type WireComposition =
  | { kind: 'mean'; abar: Float64Array; zbar: Float64Array }
  | { kind: 'nuclides'; normalize: boolean; nuclides: Array<{ a: number; z: number; massFraction: Float64Array }> };

export interface TaskOptions {
  method: 'exact' | 'table';
  components: string[];
  soundSpeed: 'newtonian' | 'relativistic';
  maxwellResiduals: boolean;
  tolerance?: number;
  maxEvaluations?: number;
}

export interface TaskOutputs {
  /** Top-level fields, in order. */
  fields: string[];
  /** Breakdown: components and their columns (empty when not asked for). */
  breakdown: Array<{ component: string; fields: string[] }>;
  maxwell: boolean;
  warningFlags: boolean;
  encoding: Encoding;
}

export interface EosTask {
  op: Operation;
  /** Points in this chunk. */
  n: number;
  /** Given state variables (length n, or 1 to broadcast). */
  given: Record<string, Float64Array>;
  composition: WireComposition;
  options: TaskOptions;
  outputs: TaskOutputs;
  /** Most status messages and warnings to list (the counts are always complete). */
  detailLimit: number;
  /** Method "table": the process's shared table (SharedArrayBuffers, shared-table.ts), when loaded. */
  table?: FreeEnergyTable;
}

/**
 * Encoding "json": a column as the JSON text of its values without brackets ("1.5,null,2"), one part
 * per chunk (the parts are joined with commas when the answer is written). From a worker thread a
 * part is UTF-8 bytes, so the text is moved to the main thread rather than copied, and the main
 * thread neither joins it into one large string nor encodes it again (json-answer.ts writes the
 * parts); from a tiny batch computed on the event loop (pool.ts runInline) it is the string itself.
 */
export interface JsonParts {
  jsonParts: Array<Uint8Array | string>;
}

/** A column: typed (Float64Array) or JSON text (JsonParts). */
export type WireColumn = Float64Array | JsonParts;

/** Regime class and summary columns in typed encoding are plain string arrays (null: not classified). */
export type AnyColumn = WireColumn | Array<string | null>;

/** Why a point has a non-zero status, in words with the values. */
export interface StatusMessage {
  point: number;
  status: number;
  code: string;
  message: string;
}

/** One warning of one point (a point may carry several). */
export interface PointWarning {
  point: number;
  code: string;
  message: string;
}

export interface EosTaskResult {
  n: number;
  computeMs: number;
  /** invert: the inverse problem solved (eos name). */
  problem?: string;
  /** Per-point status code (eos STATUS, plus NON_FINITE_OUTPUT from the gateway). */
  status: Uint8Array;
  warningFlags: Uint8Array;
  /** Requested columns; for regime the dotted columns of eos's RegimeClass (e.g. "degeneracy.eta"). */
  fields: Record<string, AnyColumn>;
  components: Record<string, Record<string, WireColumn>>;
  maxwell?: Record<string, WireColumn>;
  statusMessages: StatusMessage[];
  warnings: PointWarning[];
  /** Complete counts (the lists above stop at the task's detailLimit). */
  statusMessageCount: number;
  warningCount: number;
}

/** A failure the worker reports as data (so the pool can tell a request error from a crash). */
export interface EosTaskFailure {
  failure: 'method-not-available' | 'invalid-input';
  message: string;
}

/**
 * Gateway-level status code: the point was computed (eos status 0) but a requested output is not
 * a finite number (sent as null in JSON, NaN in binary). eos codes stay below 20.
 */
export const NON_FINITE_OUTPUT = 20;
