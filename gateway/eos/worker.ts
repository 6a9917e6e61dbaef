/**
 * Worker-thread side of the EOS pool (piscina): runs one chunk of a batch through the eos library
 * and returns the requested columns, either as typed arrays or as JSON text in UTF-8 bytes (both
 * moved, not copied), so that serializing a large answer does not happen on the gateway's event
 * loop either.
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
import { Piscina } from 'piscina';
import * as eos from '../../eos/index.js';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';
import { readTable } from '../../eos-tables/table-file.js';
import { NON_FINITE_OUTPUT, type AnyColumn, type EosTask, type EosTaskFailure, type EosTaskResult, type WireColumn } from './tasks.js';

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

function compute(task: EosTask): unknown {
  const started = performance.now();
  let res: eos.EvaluateResult;
  let problem: string | undefined;
  try {
    const input = { ...task.given, ...compositionInput(task) } as never;
    const options: eos.InvertOptions = {
      method: task.options.method,
      ...(task.options.method === 'table' ? { table } : {}),
      components: task.options.components as eos.ComponentName[],
      soundSpeed: task.options.soundSpeed,
      maxwellResiduals: task.options.maxwellResiduals,
      ...(task.options.tolerance !== undefined ? { tolerance: task.options.tolerance } : {}),
      ...(task.options.maxEvaluations !== undefined ? { maxEvaluations: task.options.maxEvaluations } : {}),
    };
    if (task.op === 'invert') {
      const inverted = eos.invert(input, options);
      problem = inverted.problem;
      res = inverted;
    } else {
      // the 45 per-component columns only when the request asks for the breakdown
      res = eos.evaluate(input, { ...options, breakdown: task.outputs.breakdown.length > 0 });
    }
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    const failure: EosTaskFailure = { failure: 'invalid-input', message };
    return failure;
  }
  return shape(task, res, problem, started);
}

function compositionInput(task: EosTask): Record<string, unknown> {
  const c = task.composition;
  if (c.kind === 'mean') return { abar: c.abar, zbar: c.zbar };
  return { nuclides: c.nuclides, normalize: c.normalize };
}

/** The requested columns of a result (numbers) or of its regime classes (numbers or strings). */
function sourceColumns(task: EosTask, res: eos.EvaluateResult): Map<string, Numeric | Array<string | null>> {
  const out = new Map<string, Numeric | Array<string | null>>();
  const n = task.n;
  if (task.op !== 'regime') {
    const cols = res as unknown as Record<string, Numeric | undefined>;
    for (const f of task.outputs.fields) out.set(f, cols[f] ?? new Float64Array(n).fill(NaN));
    return out;
  }
  const classes = new Array<eos.RegimeClass | null>(n);
  for (let i = 0; i < n; i++) classes[i] = res.status[i] === 0 ? eos.classifyPoint(res, i) : null;
  for (const name of task.outputs.fields) {
    if (name === 'summary') {
      out.set(name, classes.map((c) => c?.summary ?? null));
      continue;
    }
    const [group, key] = name.split('.') as [string, string];
    const pick = (c: eos.RegimeClass) => (c as unknown as Record<string, Record<string, number | string>>)[group]![key]!;
    if (key === 'class') out.set(name, classes.map((c) => (c ? String(pick(c)) : null)));
    else {
      const col = new Float64Array(n);
      for (let i = 0; i < n; i++) col[i] = classes[i] ? Number(pick(classes[i]!)) : NaN;
      out.set(name, col);
    }
  }
  return out;
}

function shape(task: EosTask, res: eos.EvaluateResult, problem: string | undefined, started: number) {
  const n = task.n;
  const json = task.outputs.encoding === 'json';
  const transfer: ArrayBuffer[] = [];
  const status = Uint8Array.from(res.status);
  const flags = Uint8Array.from(res.warnings);
  const messages = res.messages.slice();
  const sources = sourceColumns(task, res);
  const comps = res.components as unknown as Record<string, Record<string, Numeric>>;

  // A computed point whose requested outputs are not all finite gets NON_FINITE_OUTPUT, naming them.
  const nonFinite = new Map<number, string[]>();
  const checkFinite = (name: string, col: Numeric | Array<string | null> | undefined) => {
    if (!col || Array.isArray(col)) return;
    for (let i = 0; i < n; i++) {
      if (status[i] === 0 && !Number.isFinite(col[i]!)) {
        let list = nonFinite.get(i);
        if (!list) nonFinite.set(i, (list = []));
        list.push(name);
      }
    }
  };
  for (const [name, col] of sources) checkFinite(name, col);
  for (const { component, fields } of task.outputs.breakdown) for (const f of fields) checkFinite(`${component}.${f}`, comps[component]?.[f]);
  for (const [i, names] of nonFinite) {
    status[i] = NON_FINITE_OUTPUT;
    messages[i] = `computed, but ${names.join(', ')} ${names.length === 1 ? 'is' : 'are'} not a finite number (null in JSON, NaN in binary)`;
  }

  const jsonParts = (text: string): WireColumn => {
    const bytes = utf8.encode(text); // its own buffer, so it can be moved
    transfer.push(bytes.buffer as ArrayBuffer);
    return { jsonParts: [bytes] };
  };
  const numeric = (values: Numeric): WireColumn => {
    if (json) return jsonParts(jsonFragment(values));
    // eos allocates a fresh buffer per column: move it as it is unless it is shared or not float64
    const own = values instanceof Float64Array && values.byteOffset === 0 && values.buffer.byteLength === n * 8 && !transfer.includes(values.buffer as ArrayBuffer);
    const out = own ? (values as Float64Array) : Float64Array.from(values);
    transfer.push(out.buffer as ArrayBuffer);
    return out;
  };
  const column = (values: Numeric | Array<string | null>): AnyColumn =>
    Array.isArray(values) ? (json ? jsonParts(JSON.stringify(values).slice(1, -1)) : values) : numeric(values);

  const fields: Record<string, AnyColumn> = {};
  for (const [name, col] of sources) fields[name] = column(col);
  const components: Record<string, Record<string, WireColumn>> = {};
  for (const { component, fields: list } of task.outputs.breakdown) {
    const out: Record<string, WireColumn> = {};
    for (const f of list) out[f] = numeric(comps[component]?.[f] ?? new Float64Array(n).fill(NaN));
    components[component] = out;
  }
  let maxwell: Record<string, WireColumn> | undefined;
  if (task.outputs.maxwell && res.maxwell) {
    const m = res.maxwell as unknown as Record<string, Numeric>;
    maxwell = {};
    for (const k of ['energy', 'entropyT', 'entropyRho']) maxwell[k] = numeric(m[k]!);
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
    codes.forEach((code, k) => {
      if (warnings.length < task.detailLimit) warnings.push({ point: i, code, message: texts[k] ?? code });
    });
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
  transfer.push(status.buffer as ArrayBuffer, flags.buffer as ArrayBuffer);
  return Piscina.move({ [Piscina.transferableSymbol]: transfer, [Piscina.valueSymbol]: result } as never);
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
