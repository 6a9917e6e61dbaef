/**
 * Worker-thread task (run once, in a one-thread piscina pool of its own) that reads the free-energy
 * table file (h5wasm; 4–11 s for the default table on this machine) and returns it with every typed
 * array copied into a SharedArrayBuffer, so the main thread and all pool threads use one copy
 * without reading the file again (shared-table.ts). Off the event loop: /healthz stays responsive.
 */
import { readTable } from '../../eos-tables/table-file.js';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';

/** A deep copy of plain data in which every typed array lives in shared memory. */
function shared(value: unknown): unknown {
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    const source = value as unknown as { byteLength: number; constructor: new (buffer: SharedArrayBuffer) => { set(a: unknown): void } };
    const copy = new source.constructor(new SharedArrayBuffer(source.byteLength));
    copy.set(value);
    return copy;
  }
  if (Array.isArray(value)) return value.map(shared);
  const proto = value && typeof value === 'object' ? Object.getPrototypeOf(value) : undefined;
  // plain objects only; anything else (a Map, a class) goes through structured clone as it is
  if (proto === Object.prototype || proto === null) return Object.fromEntries(Object.entries(value as object).map(([k, v]) => [k, shared(v)]));
  return value;
}

/** The piscina task (shared-table.ts runs it once): the table in shared memory, or why not. */
export default async function loadSharedTable({ file }: { file: string }): Promise<{ table?: FreeEnergyTable; error?: string }> {
  try {
    return { table: shared(await readTable(file)) as FreeEnergyTable };
  } catch (error) {
    return { error: error instanceof Error ? error.message : String(error) };
  }
}
