/**
 * The compact binary form of the EOS endpoints (Content-Type: application/octet-stream).
 *
 * Request: the body is the columns named by `?inputs=` one after another, each n little-endian
 * IEEE-754 float64 values (column-major, no header, no padding), so its length must be
 * 8 · n · (number of inputs) bytes. Response: the columns named by `?fields=` in that order, then
 * one status column (the per-point status code as a float64), each n little-endian float64
 * values. The `Fermiwell-Layout` response header repeats the layout; `Fermiwell-Meta` carries the
 * response meta as one line of ASCII JSON.
 */
import os from 'node:os';
import { ProblemError } from '../shared/problem.js';

const LITTLE_ENDIAN_HOST = os.endianness() === 'LE';

export const LAYOUT_HEADER = 'Fermiwell-Layout';
export const META_HEADER = 'Fermiwell-Meta';

/** Splits a body into its input columns (views or copies of n float64 values each). */
export function decodeColumns(body: unknown, inputs: readonly string[]): { n: number; columns: Record<string, Float64Array> } {
  if (!Buffer.isBuffer(body)) {
    throw new ProblemError('invalid-binary-layout', 400, 'Binary body missing', 'Send the input columns as the request body with Content-Type: application/octet-stream.');
  }
  const k = inputs.length;
  const bytes = body.byteLength;
  if (k === 0) throw new ProblemError('invalid-binary-layout', 400, 'No input columns', 'Name the body columns with ?inputs=, e.g. ?inputs=density,temperature,abar,zbar.');
  if (bytes === 0 || bytes % (8 * k) !== 0) {
    throw new ProblemError(
      'invalid-binary-layout',
      400,
      'Body length does not match the layout',
      `The body has ${bytes} bytes, but ${k} float64 column(s) (${inputs.join(', ')}) need a positive multiple of ${8 * k} bytes (8 bytes × ${k} columns × points).`,
      { bodyBytes: bytes, inputs },
    );
  }
  const n = bytes / (8 * k);
  let all: Float64Array;
  if (LITTLE_ENDIAN_HOST && body.byteOffset % 8 === 0) {
    all = new Float64Array(body.buffer, body.byteOffset, n * k);
  } else if (LITTLE_ENDIAN_HOST) {
    all = new Float64Array(n * k);
    new Uint8Array(all.buffer).set(body);
  } else {
    all = new Float64Array(n * k);
    const view = new DataView(body.buffer, body.byteOffset, bytes);
    for (let i = 0; i < n * k; i++) all[i] = view.getFloat64(8 * i, true);
  }
  const columns: Record<string, Float64Array> = {};
  inputs.forEach((name, j) => (columns[name] = all.subarray(j * n, (j + 1) * n)));
  return { n, columns };
}

/** Writes columns (each n values) one after another as little-endian float64. */
export function encodeColumns(n: number, columns: ReadonlyArray<ArrayLike<number>>): Buffer {
  const out = Buffer.allocUnsafeSlow(8 * n * columns.length);
  if (LITTLE_ENDIAN_HOST) {
    const all = new Float64Array(out.buffer, out.byteOffset, n * columns.length);
    columns.forEach((col, j) => {
      if (col instanceof Float64Array) all.set(col, j * n);
      else for (let i = 0; i < n; i++) all[j * n + i] = col[i]!;
    });
  } else {
    const view = new DataView(out.buffer, out.byteOffset, out.byteLength);
    columns.forEach((col, j) => {
      for (let i = 0; i < n; i++) view.setFloat64(8 * (j * n + i), col[i]!, true);
    });
  }
  return out;
}

/** The Fermiwell-Layout header value, e.g. `float64-le; points=2; columns="pressure,status"`. */
export function layoutHeader(n: number, columns: readonly string[]): string {
  return `float64-le; points=${n}; columns="${columns.join(',')}"`;
}

/** Parses a layout header (for clients and tests). */
export function parseLayoutHeader(value: string): { encoding: string; points: number; columns: string[] } {
  const [encoding = '', ...params] = value.split(';').map((s) => s.trim());
  const map = new Map(params.map((p) => [p.slice(0, p.indexOf('=')), p.slice(p.indexOf('=') + 1).replace(/^"|"$/g, '')]));
  return { encoding, points: Number(map.get('points')), columns: (map.get('columns') ?? '').split(',').filter(Boolean) };
}

/** JSON that is safe in a header value: non-ASCII characters escaped. */
export function asciiJson(value: unknown): string {
  return JSON.stringify(value).replace(/[\u007f-\uffff]/g, (c) => '\\u' + c.charCodeAt(0).toString(16).padStart(4, '0'));
}

/** Reads a float64-le response body into named columns (for clients and tests). */
export function readColumns(body: ArrayBuffer | Uint8Array, columns: readonly string[], n: number): Record<string, Float64Array> {
  const bytes = body instanceof Uint8Array ? body : new Uint8Array(body);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out: Record<string, Float64Array> = {};
  columns.forEach((name, j) => {
    const col = new Float64Array(n);
    for (let i = 0; i < n; i++) col[i] = view.getFloat64(8 * (j * n + i), true);
    out[name] = col;
  });
  return out;
}
