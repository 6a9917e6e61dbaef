/**
 * h5wasm for the jobs feature: uploads in HDF5 are read and results written through it. Loaded
 * lazily (as eos-tables/table-file.ts does): h5wasm/node is an ES module with top-level await, which
 * a static import would force on every importer. h5wasm works on real files, so buffers go through
 * a private temporary file that is always removed.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { randomUUID } from 'node:crypto';
import type H5wasm from 'h5wasm/node';

let ready: Promise<typeof H5wasm> | null = null;

export async function h5(): Promise<typeof H5wasm> {
  ready ??= import('h5wasm/node').then(async (m) => {
    await m.default.ready;
    return m.default;
  });
  return ready;
}

/** The first 8 bytes of every HDF5 file (HDF5 File Format Specification, "Format Signature"). */
export const HDF5_SIGNATURE = Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);

export function isHdf5(bytes: Uint8Array): boolean {
  return bytes.length >= 8 && Buffer.from(bytes.subarray(0, 8)).equals(HDF5_SIGNATURE);
}

export function tempFile(suffix: string): string {
  return path.join(os.tmpdir(), `fermiwell-${process.pid}-${randomUUID()}${suffix}`);
}

/** Runs `read` on the buffer written to a temporary file (removed afterwards). */
export async function withBufferFile<T>(bytes: Uint8Array, read: (file: string) => Promise<T> | T): Promise<T> {
  const file = tempFile('.h5');
  fs.writeFileSync(file, bytes);
  try {
    return await read(file);
  } finally {
    fs.rmSync(file, { force: true });
  }
}

/** Runs `write` on a fresh temporary file and returns the bytes it wrote. */
export async function bufferFromFile(write: (file: string) => Promise<void> | void): Promise<Buffer> {
  const file = tempFile('.h5');
  try {
    await write(file);
    return fs.readFileSync(file);
  } finally {
    fs.rmSync(file, { force: true });
  }
}
