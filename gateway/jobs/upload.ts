/**
 * Reading and checking an uploaded batch of states, before anything is queued. Two formats:
 *
 * CSV (UTF-8, comma-separated): the first line that is not empty and not a comment (`#…`) is the
 * header; it names the columns, in any order, from UPLOAD_COLUMNS (CGS units: density g/cm³,
 * temperature K, specificEnergy erg/g, pressure erg/cm³, specificEntropy erg/(g·K); abar and zbar
 * per point, dimensionless). Every following line is one state; empty lines and `#` comments are
 * skipped (and still counted, so line numbers match an editor's).
 *
 * HDF5: one-dimensional numeric datasets at the root of the file, named like the CSV columns
 * (`/density`, `/temperature`, …), all of the same length; other objects in the file are ignored.
 *
 * Which columns decide the operation: density + temperature → evaluate; any other pair of state
 * variables → invert (the pairs of POST /v1/eos/invert). abar and zbar come together or not at all
 * (then the job's `composition` applies to every point).
 *
 * Problems are collected up to MAX_REPORTED_ERRORS with their line (CSV, 1-based) or index (HDF5,
 * 0-based) and column, so one round trip shows what to fix.
 */
import { ProblemError } from '../shared/problem.js';
import { h5, isHdf5, withBufferFile } from './hdf5.js';

export const STATE_COLUMNS = ['density', 'temperature', 'pressure', 'specificEnergy', 'specificEntropy'] as const;
export const UPLOAD_COLUMNS = [...STATE_COLUMNS, 'abar', 'zbar'] as const;
export const UPLOAD_UNITS: Readonly<Record<string, string>> = {
  density: 'g/cm³',
  temperature: 'K',
  pressure: 'erg/cm³',
  specificEnergy: 'erg/g',
  specificEntropy: 'erg/(g·K)',
  abar: 'dimensionless',
  zbar: 'dimensionless',
};
export const MAX_REPORTED_ERRORS = 20;

export interface UploadError {
  /** CSV: 1-based line number in the file. */
  line?: number;
  /** HDF5: 0-based index in the dataset. */
  index?: number;
  column?: string;
  value?: string;
  message: string;
}

export interface ParsedUpload {
  format: 'csv' | 'hdf5';
  /** Column name → values, in the order of UPLOAD_COLUMNS. */
  columns: Record<string, Float64Array>;
  points: number;
}

// A decimal number as written by every code and spreadsheet: no NaN, no Infinity, no hex.
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

export function invalidUpload(errors: UploadError[], detailPrefix = 'The upload has problems; nothing was queued.'): ProblemError {
  const first = errors[0]!;
  const where = first.line !== undefined ? `line ${first.line}` : first.index !== undefined ? `index ${first.index}` : '';
  const detail = `${detailPrefix} First: ${[where, first.column ? `column ${first.column}` : ''].filter(Boolean).join(', ')}${where || first.column ? ': ' : ''}${first.message}${errors.length > 1 ? ` (${errors.length - 1} more in errors)` : ''}`;
  return new ProblemError('invalid-upload', 422, 'Upload refused', detail, { errors });
}

export function tooManyPoints(points: number, maxPoints: number, plan: string, where: { line?: number; index?: number }): ProblemError {
  const at = where.line !== undefined ? ` (passed at line ${where.line})` : '';
  return new ProblemError(
    'upload-too-large',
    413,
    'Upload larger than the plan allows',
    `This upload has ${points > maxPoints ? `more than ${maxPoints}` : points} states${at}; a job on the ${plan} plan takes at most ${maxPoints}. Split it into several jobs, or move to a larger plan on the Plan & billing page. Nothing was queued.`,
    { maxPoints, ...where },
  );
}

function checkColumns(names: string[], where: (i: number) => Omit<UploadError, 'message'>): UploadError[] {
  const errors: UploadError[] = [];
  const seen = new Set<string>();
  names.forEach((name, i) => {
    if (!(UPLOAD_COLUMNS as readonly string[]).includes(name)) {
      errors.push({ ...where(i), column: name || `(column ${i + 1})`, message: `unknown column "${name}"; columns are named ${UPLOAD_COLUMNS.join(', ')} (CGS units)` });
    } else if (seen.has(name)) errors.push({ ...where(i), column: name, message: `column "${name}" appears twice` });
    seen.add(name);
  });
  const state = names.filter((n) => (STATE_COLUMNS as readonly string[]).includes(n));
  if (errors.length === 0 && state.length !== 2) {
    errors.push({ ...where(0), message: `name exactly two state columns (density and temperature to evaluate, or a pair such as density and specificEnergy to invert); found ${state.length ? state.join(', ') : 'none'}` });
  }
  if (errors.length === 0 && seen.has('abar') !== seen.has('zbar')) errors.push({ ...where(0), message: 'abar and zbar come together (or leave both out and give a composition for the whole job)' });
  return errors;
}

/** CSV text → columns; throws invalidUpload / tooManyPoints. */
export function parseCsv(text: string, maxPoints: number, plan: string): ParsedUpload {
  const lines = text.split(/\r?\n/);
  let header: string[] | undefined;
  let headerLine = 0;
  const errors: UploadError[] = [];
  let columns: number[][] = [];
  let rows = 0;
  for (let k = 0; k < lines.length; k++) {
    const raw = lines[k]!;
    const line = k === 0 ? raw.replace(/^\uFEFF/, '') : raw;
    const trimmed = line.trim();
    if (trimmed === '' || trimmed.startsWith('#')) continue;
    const cells = trimmed.split(',').map((c) => c.trim());
    if (!header) {
      header = cells.map((c) => c.replace(/^"(.*)"$/, '$1'));
      headerLine = k + 1;
      const problems = checkColumns(header, () => ({ line: headerLine }));
      if (problems.length) throw invalidUpload(problems, 'The header line does not name the columns of a batch; nothing was queued.');
      columns = header.map(() => []);
      continue;
    }
    rows += 1;
    if (rows > maxPoints) throw tooManyPoints(rows, maxPoints, plan, { line: k + 1 });
    if (cells.length !== header.length) {
      errors.push({ line: k + 1, message: `${cells.length} values, but the header (line ${headerLine}) names ${header.length} columns` });
    } else {
      for (let c = 0; c < cells.length; c++) {
        const cell = cells[c]!;
        const value = NUMBER.test(cell) ? Number(cell) : NaN;
        if (!Number.isFinite(value)) {
          const what = cell === '' ? 'is empty' : /^[+-]?(nan|inf|infinity)$/i.test(cell) ? 'is not a finite number' : 'is not a number';
          errors.push({ line: k + 1, column: header[c]!, value: cell, message: `"${cell}" ${what}` });
        }
        columns[c]!.push(value);
      }
    }
    if (errors.length >= MAX_REPORTED_ERRORS) break;
  }
  if (!header) throw invalidUpload([{ line: 1, message: `the file has no header line; the first line names the columns, e.g. "density,temperature"` }]);
  if (errors.length) throw invalidUpload(errors);
  if (rows === 0) throw invalidUpload([{ line: headerLine, message: 'the header is followed by no states' }]);
  const out: Record<string, Float64Array> = {};
  for (const name of UPLOAD_COLUMNS) {
    const c = header.indexOf(name);
    if (c >= 0) out[name] = Float64Array.from(columns[c]!);
  }
  return { format: 'csv', columns: out, points: rows };
}

/** HDF5 bytes → columns; throws invalidUpload / tooManyPoints. */
export async function parseHdf5(bytes: Uint8Array, maxPoints: number, plan: string): Promise<ParsedUpload> {
  const lib = await h5();
  return withBufferFile(bytes, (file) => {
    let f: InstanceType<typeof lib.File>;
    try {
      f = new lib.File(file, 'r');
    } catch (error) {
      throw invalidUpload([{ message: `the file is not readable as HDF5 (${(error as Error).message})` }]);
    }
    // h5wasm does not throw on a file it cannot open (one with the signature and garbage after it):
    // the id is negative and every later call fails with an unrelated message
    if (Number(f.file_id) < 0) {
      throw invalidUpload([{ message: 'the file starts with the HDF5 signature but is not readable as HDF5 (truncated or damaged)' }]);
    }
    try {
      const names = (f.keys() as string[]).filter((k) => (UPLOAD_COLUMNS as readonly string[]).includes(k));
      const errors = checkColumns(names, () => ({}));
      if (names.length === 0) {
        throw invalidUpload([{ message: `no dataset named like a column at the root of the file (found ${(f.keys() as string[]).map((k) => '/' + k).join(', ') || 'nothing'}); use /${UPLOAD_COLUMNS.join(', /')}` }]);
      }
      if (errors.length) throw invalidUpload(errors.map((e) => ({ ...e, message: e.message.replace('columns', 'datasets') })));
      const out: Record<string, Float64Array> = {};
      let length: number | undefined;
      const problems: UploadError[] = [];
      for (const name of UPLOAD_COLUMNS) {
        if (!names.includes(name)) continue;
        const ds = f.get(name);
        if (!(ds instanceof lib.Dataset)) {
          problems.push({ column: name, message: `/${name} is a group, not a dataset` });
          continue;
        }
        const shape = ds.shape ?? [];
        if (shape.length !== 1) {
          problems.push({ column: name, message: `/${name} has shape [${shape.join(', ')}]; give a one-dimensional dataset` });
          continue;
        }
        const n = shape[0]!;
        if (n > maxPoints) throw tooManyPoints(n, maxPoints, plan, {});
        const value = ds.value as unknown;
        if (!ArrayBuffer.isView(value) || value instanceof DataView || typeof (value as unknown as ArrayLike<unknown>)[0] === 'bigint') {
          problems.push({ column: name, message: `/${name} is not a floating-point or integer dataset (dtype ${String(ds.dtype)})` });
          continue;
        }
        const col = Float64Array.from(value as unknown as ArrayLike<number>);
        if (length !== undefined && col.length !== length) problems.push({ column: name, message: `/${name} has ${col.length} values, the other datasets ${length}` });
        length ??= col.length;
        for (let i = 0; i < col.length && problems.length < MAX_REPORTED_ERRORS; i++) {
          if (!Number.isFinite(col[i]!)) problems.push({ index: i, column: name, value: String(col[i]), message: `${col[i]} is not a finite number` });
        }
        out[name] = col;
      }
      if (problems.length) throw invalidUpload(problems);
      if (!length) throw invalidUpload([{ message: 'the datasets are empty' }]);
      return { format: 'hdf5', columns: out, points: length };
    } catch (error) {
      // a damaged file that opened: h5wasm's own errors are the upload's problem, not ours
      if (error instanceof ProblemError) throw error;
      throw invalidUpload([{ message: `the file is not readable as HDF5 (${(error as Error).message})` }]);
    } finally {
      f.close();
    }
  });
}

/** Either format, told apart by the HDF5 signature. */
export async function parseUpload(bytes: Uint8Array, maxPoints: number, plan: string): Promise<ParsedUpload> {
  if (isHdf5(bytes)) return parseHdf5(bytes, maxPoints, plan);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw invalidUpload([{ message: 'the file is neither HDF5 nor UTF-8 text (CSV)' }]);
  }
  return parseCsv(text, maxPoints, plan);
}
