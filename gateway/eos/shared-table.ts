/**
 * The free-energy table for method "table", read once per gateway process and shared: a helper
 * thread (table-loader.ts) reads the file and hands back the table in SharedArrayBuffers; tasks
 * for the pool carry it (structured clone of shared memory copies no data, ~20–90 µs per task), and
 * small batches use it on the event loop (pool.ts). Before, each pool thread read the file itself
 * on its first table task, so the first table requests waited seconds per thread and every thread
 * held its own copy.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';

const ownFile = fileURLToPath(import.meta.url);
const loaderFile = new URL('./table-loader' + path.extname(ownFile), import.meta.url);

export class SharedTable {
  private load: Promise<FreeEnergyTable | undefined> | undefined;
  private loader: Piscina | undefined;
  /** Set once loaded; undefined before and when it could not be shared. */
  table: FreeEnergyTable | undefined;

  constructor(private readonly file: string) {}

  /**
   * The table, read on the first call. Resolves to undefined if the helper thread could not read
   * or share it: the pool threads then read the file themselves, which reports the problem.
   */
  get(): Promise<FreeEnergyTable | undefined> {
    this.load ??= (async () => {
      // a pool of one thread, for its loading of TypeScript sources under tsx and its clean shutdown
      const loader = new Piscina({ filename: loaderFile.href, name: 'default', minThreads: 1, maxThreads: 1 });
      this.loader = loader;
      try {
        const answer = (await loader.run({ file: this.file })) as { table?: FreeEnergyTable; error?: string };
        this.table = answer.table;
      } catch {
        this.table = undefined;
      } finally {
        this.loader = undefined;
        await loader.destroy();
      }
      return this.table;
    })();
    return this.load;
  }

  async close(): Promise<void> {
    await this.loader?.destroy();
  }
}
