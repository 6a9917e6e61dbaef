/**
 * Worker-thread side of the EOS pool (piscina): runs one chunk of a batch through the eos library
 * and returns the requested columns, either as typed arrays or as JSON text in UTF-8 bytes (both
 * moved, not copied), so that serializing a large answer does not happen on the gateway's event
 * loop either.
 *
 * Tiny batches run this same function on the event loop (pool.ts runInline): there the answer is
 * returned as it is (nothing to move), JSON text stays a string, and small JSON answers evaluate
 * into one kept result (reusableResult), so a single point allocates little besides its answer.
 *
 * Problems of single points come back as status codes and messages (the eos library never throws
 * for them). A structural problem the service should have caught, or a method the library does not
 * offer yet, comes back as an EosTaskFailure value rather than an exception, so the pool can tell
 * a request error (4xx/501) from a crash (500).
 *
 * Method "table": tasks carry the process's shared table (shared-table.ts; SharedArrayBuffers, so
 * nothing is copied) and a thread keeps the first one it gets. Only if that could not be loaded does
 * a thread read the file (EOS_TABLE_PATH, passed as piscina workerData) itself, on its first table task.
 */
import { isMainThread } from 'node:worker_threads';
import { Piscina } from 'piscina';
import * as eos from '../../eos/index.js';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';
import { readTable } from '../../eos-tables/table-file.js';
import { NON_FINITE_OUTPUT, type AnyColumn, type EosTask, type EosTaskFailure, type EosTaskResult, type JsonParts, type WireColumn } from './tasks.js';

type Numeric = ArrayLike<number>;

const utf8 = new TextEncoder();

const STATUS_NAMES: Record<number, string> = Object.fromEntries(Object.entries(eos.STATUS).map(([name, code]) => [code, name]));
STATUS_NAMES[NON_FINITE_OUTPUT] = 'NON_FINITE_OUTPUT';

/** The pool's table file (EosPoolOptions.tablePath), or null when none is configured. */
const tablePath: string | null = (Piscina.workerData as { tablePath?: string | null } | undefined)?.tablePath ?? null;
/** The table: the shared one from the first task that carries it, else read by this thread (h5wasm); then kept. */
let table: FreeEnergyTable | undefined;
let tableLoading: Promise<FreeEnergyTable> | undefined;

function loadTable(file: string): Promise<FreeEnergyTable> {
  tableLoading ??= readTable(file).then(
    (t) => (table = t),
    (error: unknown) => {
      tableLoading = undefined; // a later task tries again
      throw new Error(`could not read the free-energy table ${file}: ${error instanceof Error ? error.message : String(error)}`);
    },
  );
  return tableLoading;
}

export default function runTask(task: EosTask): unknown {
  if (task.table) table ??= task.table;
  if (task.options.method === 'table' && table === undefined) {
    if (tablePath === null) {
      const failure: EosTaskFailure = { failure: 'method-not-available', message: 'this gateway has no free-energy table configured (EOS_TABLE_PATH)' };
      return failure;
    }
    return loadTable(tablePath).then(
      () => compute(task),
      (error: unknown) => {
        // a configured table that cannot be read (damaged, or of an older format): the method is
        // unavailable on this gateway, not an internal error; the file's path stays in the log
        console.error(error instanceof Error ? error.message : String(error));
        const failure: EosTaskFailure = { failure: 'method-not-available', message: 'the free-energy table of this gateway could not be read (its operator can rebuild it with npm run build:table)' };
        return failure;
      },
    );
  }
  return compute(task);
}

/** JSON answers of at most this many points reuse one EvaluateResult (see reuseSlot). */
const REUSE_MAX_POINTS = 256;
/** The last JSON-encoded result per (maxwellResiduals, breakdown) setting, for evaluate's options.into. */
const reusable: Array<eos.EvaluateResult | undefined> = [undefined, undefined, undefined, undefined];

/**
 * The slot of `reusable` a task may evaluate into (options.into), or -1: only small JSON answers,
 * whose columns are turned into text before the next task starts (compute is synchronous), never
 * typed ones (their buffers go to the caller). Saves the allocation and first touch of ~80 columns.
 */
function reuseSlot(task: EosTask, breakdown: boolean): number {
  if (task.outputs.encoding !== 'json' || task.n > REUSE_MAX_POINTS) return -1;
  return (task.options.maxwellResiduals ? 1 : 0) + (breakdown ? 2 : 0);
}

function compute(task: EosTask): unknown {
  const started = performance.now();
  let res: eos.EvaluateResult;
  let problem: string | undefined;
  try {
    const c = task.composition;
    const o = task.options;
    if (task.op === 'invert') {
      const input = { ...task.given, ...(c.kind === 'mean' ? { abar: c.abar, zbar: c.zbar } : { nuclides: c.nuclides, normalize: c.normalize }) };
      const options: eos.InvertOptions = {
        method: o.method,
        ...(o.method === 'table' ? { table } : {}),
        components: o.components as eos.ComponentName[],
        soundSpeed: o.soundSpeed,
        maxwellResiduals: o.maxwellResiduals,
        ...(o.tolerance !== undefined ? { tolerance: o.tolerance } : {}),
        ...(o.maxEvaluations !== undefined ? { maxEvaluations: o.maxEvaluations } : {}),
      };
      const inverted = eos.invert(input as never, options);
      problem = inverted.problem;
      res = inverted;
    } else {
      // the 45 per-component columns only when the request asks for the breakdown
      const breakdown = task.outputs.breakdown.length > 0;
      const slot = reuseSlot(task, breakdown);
      const kept = slot < 0 ? undefined : reusable[slot];
      const into = kept !== undefined && kept.n === task.n ? kept : undefined;
      // evaluate and regime are given density and temperature (service.ts prepare); an object literal
      // of fixed shape (a copy of task.given with properties added is slower to build and to read)
      const { density, temperature } = task.given;
      const input = c.kind === 'mean' ? { density, temperature, abar: c.abar, zbar: c.zbar } : { density, temperature, nuclides: c.nuclides, normalize: c.normalize };
      res = eos.evaluate(input as never, {
        method: o.method,
        table: o.method === 'table' ? table : undefined,
        components: o.components as eos.ComponentName[],
        soundSpeed: o.soundSpeed,
        maxwellResiduals: o.maxwellResiduals,
        breakdown,
        into,
      });
      if (slot >= 0 && into === undefined) reusable[slot] = res;
    }
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    const failure: EosTaskFailure = { failure: 'invalid-input', message };
    return failure;
  }
  return shape(task, res, problem, started);
}

/** The requested columns of a result (numbers) or of its regime classes (numbers or strings), in order. */
function sourceColumns(task: EosTask, res: eos.EvaluateResult): Array<Numeric | Array<string | null>> {
  const n = task.n;
  const names = task.outputs.fields;
  const out = new Array<Numeric | Array<string | null>>(names.length);
  if (task.op !== 'regime') {
    const cols = res as unknown as Record<string, Numeric | undefined>;
    for (let j = 0; j < names.length; j++) out[j] = cols[names[j]!] ?? new Float64Array(n).fill(NaN);
    return out;
  }
  const classes = new Array<eos.RegimeClass | null>(n);
  for (let i = 0; i < n; i++) classes[i] = res.status[i] === 0 ? eos.classifyPoint(res, i) : null;
  for (let j = 0; j < names.length; j++) {
    const name = names[j]!;
    if (name === 'summary') {
      out[j] = classes.map((c) => c?.summary ?? null);
      continue;
    }
    const [group, key] = name.split('.') as [string, string];
    const pick = (c: eos.RegimeClass) => (c as unknown as Record<string, Record<string, number | string>>)[group]![key]!;
    if (key === 'class') out[j] = classes.map((c) => (c ? String(pick(c)) : null));
    else {
      const col = new Float64Array(n);
      for (let i = 0; i < n; i++) col[i] = classes[i] ? Number(pick(classes[i]!)) : NaN;
      out[j] = col;
    }
  }
  return out;
}

/**
 * Columns of one task as they leave it. Text of JSON columns: a string when this module runs on the
 * event loop (pool.ts runInline; nothing to move, so nothing is encoded here and decoded again in
 * json-answer.ts), UTF-8 bytes in a worker thread (moved, not copied, to the main thread).
 */
class Columns {
  readonly transfer: ArrayBuffer[] = [];
  constructor(
    private readonly n: number,
    private readonly json: boolean,
  ) {}

  numeric(values: Numeric): WireColumn {
    if (this.json) return this.text(jsonFragment(values));
    // eos allocates a fresh buffer per column: move it as it is unless it is shared or not float64
    const own = values instanceof Float64Array && values.byteOffset === 0 && values.buffer.byteLength === this.n * 8 && !this.transfer.includes(values.buffer as ArrayBuffer);
    if (own) {
      this.transfer.push(values.buffer as ArrayBuffer);
      return values as Float64Array;
    }
    const out = Float64Array.from(values);
    // on the event loop nothing is moved (and .buffer of a small array would move it off the heap)
    if (!isMainThread) this.transfer.push(out.buffer as ArrayBuffer);
    return out;
  }

  any(values: Numeric | Array<string | null>): AnyColumn {
    if (!Array.isArray(values)) return this.numeric(values);
    return this.json ? this.text(JSON.stringify(values).slice(1, -1)) : values;
  }

  private text(text: string): JsonParts {
    if (isMainThread) return { jsonParts: [text] };
    const bytes = utf8.encode(text); // its own buffer, so it can be moved
    this.transfer.push(bytes.buffer as ArrayBuffer);
    return { jsonParts: [bytes] };
  }
}

/** Names of the requested outputs of each point that are not finite numbers (point → names). */
type NonFinite = Array<string[] | undefined>;

function checkFinite(nonFinite: NonFinite | undefined, status: Uint8Array, name: string, col: Numeric | Array<string | null> | undefined, n: number): NonFinite | undefined {
  if (!col || Array.isArray(col)) return nonFinite;
  for (let i = 0; i < n; i++) {
    if (status[i] === 0 && !Number.isFinite(col[i]!)) {
      nonFinite ??= new Array<string[] | undefined>(n);
      (nonFinite[i] ??= []).push(name);
    }
  }
  return nonFinite;
}

function shape(task: EosTask, res: eos.EvaluateResult, problem: string | undefined, started: number) {
  const n = task.n;
  // copies: the result may be evaluated into again by the next task (reusableResult)
  const status = res.status.slice();
  const flags = res.warnings.slice();
  let messages = res.messages;
  const sources = sourceColumns(task, res);
  const comps = res.components as unknown as Record<string, Record<string, Numeric>>;
  const names = task.outputs.fields;
  const breakdown = task.outputs.breakdown;

  // A computed point whose requested outputs are not all finite gets NON_FINITE_OUTPUT, naming them
  // (every column is checked before any status changes).
  let nonFinite: NonFinite | undefined;
  for (let j = 0; j < names.length; j++) nonFinite = checkFinite(nonFinite, status, names[j]!, sources[j], n);
  for (const { component, fields: list } of breakdown) {
    for (const f of list) nonFinite = checkFinite(nonFinite, status, `${component}.${f}`, comps[component]?.[f], n);
  }
  if (nonFinite) {
    messages = messages.slice();
    for (let i = 0; i < n; i++) {
      const list = nonFinite[i];
      if (!list) continue;
      status[i] = NON_FINITE_OUTPUT;
      messages[i] = `computed, but ${list.join(', ')} ${list.length === 1 ? 'is' : 'are'} not a finite number (null in JSON, NaN in binary)`;
    }
  }

  const out = new Columns(n, task.outputs.encoding === 'json');
  const fields: Record<string, AnyColumn> = {};
  for (let j = 0; j < names.length; j++) fields[names[j]!] = out.any(sources[j]!);
  const components: Record<string, Record<string, WireColumn>> = {};
  for (const { component, fields: list } of breakdown) {
    const cols: Record<string, WireColumn> = {};
    for (const f of list) cols[f] = out.numeric(comps[component]?.[f] ?? new Float64Array(n).fill(NaN));
    components[component] = cols;
  }
  let maxwell: Record<string, WireColumn> | undefined;
  if (task.outputs.maxwell && res.maxwell) {
    const m = res.maxwell;
    maxwell = { energy: out.numeric(m.energy), entropyT: out.numeric(m.entropyT), entropyRho: out.numeric(m.entropyRho) };
  }

  const statusMessages: EosTaskResult['statusMessages'] = [];
  let statusMessageCount = 0;
  for (let i = 0; i < n; i++) {
    if (status[i] === 0) continue;
    statusMessageCount++;
    if (statusMessages.length < task.detailLimit) {
      const code = status[i]!;
      statusMessages.push({ point: i, status: code, code: STATUS_NAMES[code] ?? `STATUS_${code}`, message: messages[i] || eos.STATUS_TEXT[code] || '' });
    }
  }
  const warnings: EosTaskResult['warnings'] = [];
  let warningCount = 0;
  for (let i = 0; i < n; i++) {
    if (flags[i] === 0) continue;
    const codes = eos.decodeWarnings(flags[i]!);
    warningCount += codes.length;
    if (warnings.length >= task.detailLimit) continue;
    const texts = eos.describeWarnings(res, i);
    for (let k = 0; k < codes.length && warnings.length < task.detailLimit; k++) warnings.push({ point: i, code: codes[k]!, message: texts[k] ?? codes[k]! });
  }

  const result: EosTaskResult = {
    n,
    computeMs: performance.now() - started,
    ...(problem ? { problem } : {}),
    status,
    warningFlags: flags,
    fields,
    components,
    ...(maxwell ? { maxwell } : {}),
    statusMessages,
    warnings,
    statusMessageCount,
    warningCount,
  };
  // on the event loop (runInline) the value itself; from a thread, moved
  if (isMainThread) return result;
  out.transfer.push(status.buffer as ArrayBuffer, flags.buffer as ArrayBuffer);
  return Piscina.move({ [Piscina.transferableSymbol]: out.transfer, [Piscina.valueSymbol]: result } as never);
}

/** "1.5,null,2": JSON numbers without brackets (non-finite → null, as JSON.stringify does). */
export function jsonFragment(values: Numeric): string {
  if (values.length <= 16) {
    // small answers (single points): JSON.stringify writes a finite number as String(number) does
    // (ECMA-262 SerializeJSONProperty), without the array copy; ~1 µs less per column
    let text = '';
    for (let i = 0; i < values.length; i++) {
      const x = values[i]!;
      text += (i === 0 ? '' : ',') + (Number.isFinite(x) ? String(x) : 'null');
    }
    return text;
  }
  const text = JSON.stringify(Array.from(values));
  return text.slice(1, -1);
}
