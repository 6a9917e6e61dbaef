/**
 * The worker-thread pool (piscina) that runs every EOS batch: CPU work never runs on the event
 * loop, so /healthz and small requests stay responsive while a large batch computes.
 *
 * A batch is cut into chunks (EOS_CHUNK_POINTS points); each request keeps at most one chunk per
 * thread in flight, so concurrent requests interleave instead of queueing behind a large one. Each
 * chunk has a timeout (EOS_TASK_TIMEOUT_MS, counted from when the chunk is handed to the pool, so a
 * wait for a free thread counts too and an overloaded pool sheds work); a timeout, a failed chunk or
 * the client going away aborts the request's other chunks (a running chunk by stopping its thread,
 * which piscina replaces). The pool refuses new work (503) when the points waiting would
 * pass EOS_MAX_PENDING_POINTS, so memory stays bounded under overload.
 *
 * Tiny batches run inline (runInline below): an `evaluate` or `regime` chunk of at most
 * INLINE_MAX_POINTS points (exact) or INLINE_MAX_TABLE_POINTS points (table, once the shared table
 * is loaded) is computed on the event loop by the worker's own task function, because handing it to
 * a thread and back costs more than the physics (~20 µs per point exact, ~2 µs table, so at most
 * ~1.3 ms / ~0.5 ms on the loop). Inversions (iterative, cost not bounded by the point count) and
 * every larger batch still go to the threads.
 *
 * The table (method "table") is read once per process by a helper thread and shared with the
 * threads in SharedArrayBuffers (shared-table.ts); tableForTasks() gives it to the service.
 *
 * The worker file is resolved next to this module with this module's own extension: `.ts` when
 * running under tsx (workers inherit `--import tsx` through execArgv), `.js` when compiled.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { ProblemError } from '../shared/problem.js';
import type { PoolStats } from '../metrics.js';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';
import { SharedTable } from './shared-table.js';
import type { EosTask, EosTaskFailure, EosTaskResult } from './tasks.js';

export interface EosPoolOptions {
  minThreads: number;
  /** 0 = one per available core */
  maxThreads: number;
  taskTimeoutMs: number;
  maxPendingPoints: number;
  /**
   * The free-energy table file (HDF5, eos-tables/table-file.ts) for method "table"; each worker
   * thread reads it once, on its first table task, and keeps it. Unset: method "table" answers 501.
   */
  tablePath?: string;
}

/** Largest exact evaluate/regime batch computed on the event loop instead of a worker thread. */
export const INLINE_MAX_POINTS = 64;
/** Largest table evaluate/regime batch computed on the event loop (table method ~10× cheaper per point). */
export const INLINE_MAX_TABLE_POINTS = 256;

const ownFile = fileURLToPath(import.meta.url);
const workerFile = new URL('./worker' + path.extname(ownFile), import.meta.url);

export class EosPool implements PoolStats {
  private readonly piscina: Piscina<EosTask, EosTaskResult | EosTaskFailure>;
  private pendingPoints = 0;
  private closed = false;
  readonly maxThreads: number;
  readonly tablePath: string | undefined;
  private readonly sharedTable: SharedTable | undefined;

  constructor(private readonly options: EosPoolOptions) {
    this.tablePath = options.tablePath || undefined;
    if (this.tablePath && !fs.existsSync(this.tablePath)) {
      throw new Error(`EOS_TABLE_PATH: no free-energy table at ${this.tablePath} (npm run build:table builds the default one)`);
    }
    this.sharedTable = this.tablePath ? new SharedTable(this.tablePath) : undefined;
    const maxThreads = options.maxThreads > 0 ? options.maxThreads : Math.max(1, os.availableParallelism());
    const minThreads = Math.min(Math.max(0, options.minThreads), maxThreads);
    this.maxThreads = maxThreads;
    this.piscina = new Piscina({
      filename: workerFile.href,
      name: 'default',
      minThreads,
      maxThreads,
      // threads beyond minThreads stay for a while once started: starting one costs a few hundred
      // milliseconds (more under tsx), which a request would otherwise wait for again and again
      idleTimeout: 10 * 60_000,
      // bounded by pendingPoints below, in points rather than tasks
      maxQueue: Number.MAX_SAFE_INTEGER,
      concurrentTasksPerWorker: 1,
      // worker.ts reads the table from here (Piscina.workerData) on its first table task
      workerData: { tablePath: this.tablePath ?? null },
    });
  }

  /**
   * Runs the chunks of one request (built lazily, so only a few chunks' inputs exist at a time)
   * and returns their results in order. Throws a ProblemError for timeouts, overload and closed pool.
   */
  async runChunks(points: number, chunks: Array<() => { task: EosTask; transfer: ArrayBuffer[] }>, stop?: AbortSignal | LazySignal): Promise<Array<EosTaskResult | EosTaskFailure>> {
    if (this.closed) throw new ProblemError('service-unavailable', 503, 'Shutting down', 'This gateway instance is shutting down; retry the request.', { retryAfterSeconds: 1 });
    if (this.pendingPoints > 0 && this.pendingPoints + points > this.options.maxPendingPoints) {
      throw new ProblemError(
        'server-busy',
        503,
        'Evaluation capacity busy',
        `${this.pendingPoints} points are waiting for the worker threads; this batch of ${points} would pass the limit of ${this.options.maxPendingPoints}. Retry in a few seconds, or send smaller batches.`,
        { retryAfterSeconds: 2 },
      );
    }
    // after the overload check: an overloaded instance sheds tiny batches too
    if (chunks.length === 1 && points <= Math.max(INLINE_MAX_POINTS, INLINE_MAX_TABLE_POINTS) && this.inlineTask) {
      const built = chunks[0]!();
      const inline = this.runInline(built.task, stop);
      if (inline) return inline;
      chunks = [() => built];
    }
    const signal = stop instanceof LazySignal ? stop.signal : stop;
    this.pendingPoints += points;
    const abort = new AbortController();
    const onAbort = () => abort.abort(signal?.reason);
    if (signal?.aborted) abort.abort(signal.reason);
    else signal?.addEventListener('abort', onAbort, { once: true });
    const results: Array<EosTaskResult | EosTaskFailure> = new Array(chunks.length);
    let next = 0;
    let failed: unknown;
    let timedOut = false;
    const lane = async () => {
      while (next < chunks.length && !abort.signal.aborted) {
        const index = next++;
        const { task, transfer } = chunks[index]!();
        // one plain timer per chunk (AbortSignal.timeout would keep a timer alive for the whole
        // limit after the chunk is done; AbortSignal.any is slow on Node 20)
        const timer = setTimeout(() => {
          timedOut = true;
          abort.abort(new Error('chunk timed out'));
        }, this.options.taskTimeoutMs);
        try {
          const result = await this.piscina.run(task, { transferList: transfer, signal: abort.signal });
          results[index] = result;
          if ('failure' in result) abort.abort(result);
        } catch (error) {
          failed ??= error;
          abort.abort(error);
        } finally {
          clearTimeout(timer);
        }
      }
    };
    try {
      await Promise.all(Array.from({ length: Math.min(this.maxThreads, chunks.length) }, lane));
    } finally {
      this.pendingPoints -= points;
      signal?.removeEventListener('abort', onAbort);
    }
    const failure = results.find((r) => r && 'failure' in r);
    if (failure) return [failure];
    if (signal?.aborted && !timedOut) {
      throw new ProblemError('client-closed-request', 499, 'Request abandoned', 'The client went away before the batch finished; nothing was billed.');
    }
    if (timedOut) {
      throw new ProblemError(
        'evaluation-timeout',
        504,
        'Evaluation took too long',
        `A chunk of this batch did not finish within ${this.options.taskTimeoutMs} ms, so the request was stopped and nothing was billed. Split the batch into smaller requests.`,
      );
    }
    if (this.closed) throw new ProblemError('service-unavailable', 503, 'Shutting down', 'This gateway instance shut down while the batch was computing; nothing was billed. Retry the request.');
    if (failed !== undefined) throw failed;
    return results;
  }

  /** The worker's task function, loaded in this thread for runInline (undefined until loaded). */
  private inlineTask: ((task: EosTask) => unknown) | undefined;
  private readonly inlineLoad = import(workerFile.href).then(
    (m: { default: (task: EosTask) => unknown }) => (this.inlineTask = m.default),
    () => undefined, // without it every batch simply goes to the threads
  );

  /**
   * The table for method "table" tasks: read on the first call (the caller waits, once per process)
   * and shared; undefined without EOS_TABLE_PATH or if it could not be shared (then each thread
   * reads the file on its first table task, as the worker's fallback).
   */
  tableForTasks(): Promise<FreeEnergyTable | undefined> {
    return this.sharedTable ? this.sharedTable.get() : Promise.resolve(undefined);
  }

  /**
   * A tiny evaluate/regime chunk computed here (see the header); undefined when the task is not
   * one for inline work, so the caller hands it to the pool.
   */
  private runInline(task: EosTask, signal?: { readonly aborted: boolean }): Array<EosTaskResult | EosTaskFailure> | undefined {
    if (task.op === 'invert') return undefined;
    const limit = task.options.method === 'exact' ? INLINE_MAX_POINTS : task.table ? INLINE_MAX_TABLE_POINTS : 0;
    if (task.n > limit) return undefined;
    if (signal?.aborted) throw new ProblemError('client-closed-request', 499, 'Request abandoned', 'The client went away before the batch finished; nothing was billed.');
    let result = this.inlineTask!(task);
    if (result instanceof Promise) return undefined; // only when a table must be read; never here
    // the worker wraps answers for transfer (Piscina.move); in this thread take the value itself
    if (result && typeof result === 'object' && Piscina.valueSymbol in result) result = (result as Record<symbol, unknown>)[Piscina.valueSymbol];
    return [result as EosTaskResult | EosTaskFailure];
  }

  queueSize(): number {
    return this.piscina.queueSize;
  }

  utilization(): number {
    return this.piscina.utilization;
  }

  threads(): number {
    return this.piscina.threads.length;
  }

  async close(): Promise<void> {
    this.closed = true;
    await this.sharedTable?.close();
    await this.piscina.destroy();
  }
}

/**
 * A request's stop signal, made only when a batch goes to the threads: an AbortController costs
 * ~4 µs, and a batch computed inline only asks whether the client has already gone.
 */
export class LazySignal {
  private controller: AbortController | undefined;
  private stopped = false;

  get aborted(): boolean {
    return this.stopped;
  }

  abort(): void {
    this.stopped = true;
    this.controller?.abort();
  }

  get signal(): AbortSignal {
    if (this.controller === undefined) {
      this.controller = new AbortController();
      if (this.stopped) this.controller.abort();
    }
    return this.controller.signal;
  }
}
