/**
 * The job worker: takes chunks (and table builds) from the queue, computes them in the EOS
 * worker-thread pool through the same EosService that answers /v1/eos, stores results durably, and
 * finishes jobs. The gateway runs one by default (JOBS_IN_PROCESS_WORKER); `npm run worker`
 * (scripts/worker.ts) runs one as its own process on any machine that reaches the database.
 *
 * Exactly-once results from at-least-once delivery: a chunk's result is written only while the
 * chunk has none (job_chunks.result IS NULL, in the transaction that advances the job's counters),
 * so a chunk delivered twice — its first worker was killed after storing, or a retry overtook a
 * slow worker — is computed again at worst but stored, counted and metered once. Whoever stores the
 * last chunk assembles the result files; that step is idempotent too (it locks the job row and does
 * nothing for a job that is no longer active), and a worker that dies in it leaves the last chunk's
 * message to be delivered again, which finishes the job.
 *
 * A chunk that fails JOBS_CHUNK_RETRIES + 1 times (or whose workers keep dying) reaches the
 * dead-letter queue; its handler marks the job failed and mails its creator.
 */
import os from 'node:os';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type PgBoss from 'pg-boss';
import type { Config } from '../config.js';
import type { EosService } from '../eos/service.js';
import type { Mailer } from '../mail/mailer.js';
import type { Meter } from '../usage/meter.js';
import { ProblemError } from '../shared/problem.js';
import { TableBuildRunner } from '../tables/runner.js';
import { jobFailedMail, jobFinishedMail } from './messages.js';
import { QUEUES, type ChunkMessage, type JobQueue, type TableMessage } from './queue.js';
import { assemble, packColumns, resultsCsv, resultsHdf5, statusCounts, unpackColumns, warningSummary, type ResultsRequest } from './results.js';
import { JOBS_ENDPOINT } from './service.js';
import { h5 } from './hdf5.js';
import * as store from './store.js';

/** Limits that never refuse: a job's points were admitted when it was submitted. */
const ADMITTED = { plan: 'job', pointsPerMonth: Number.POSITIVE_INFINITY, requestsPerSecond: Number.POSITIVE_INFINITY, maxBatch: Number.POSITIVE_INFINITY, tableBuildsPerMonth: null };

export interface WorkerDeps {
  db: Knex;
  queue: JobQueue;
  eos: EosService;
  meter: Meter;
  mailer: Mailer;
  config: Config;
  logger: Logger;
}

export class JobWorker {
  readonly name: string;
  private readonly tables: TableBuildRunner;

  constructor(private readonly deps: WorkerDeps) {
    this.name = deps.config.JOBS_WORKER_NAME ?? `${os.hostname()}:${process.pid}`;
    this.tables = new TableBuildRunner({ ...deps, notify: (row) => this.notify(row) });
  }

  /** Registers `concurrency` chunk consumers, one table-build consumer and the dead-letter consumers. */
  async start(concurrency: number, options: { warmHdf5?: boolean } = {}): Promise<void> {
    const { queue } = this.deps;
    // h5wasm compiles its WebAssembly on first use (about a second, more on a busy machine, partly
    // on the event loop): a standalone worker warms it now; a gateway waits until a job needs it
    if (options.warmHdf5) void h5().catch(() => undefined);
    await queue.start();
    for (let i = 0; i < concurrency; i++) await queue.work<ChunkMessage>(QUEUES.chunk, (job) => this.handleChunk(job));
    await queue.work<TableMessage>(QUEUES.table, (job) => this.tables.handle(job));
    await queue.work<ChunkMessage>(QUEUES.chunkDead, (job) => this.chunkGaveUp(job.data.jobId, `chunk ${job.data.chunkIndex} failed ${this.deps.config.JOBS_CHUNK_RETRIES + 1} times`));
    await queue.work<TableMessage>(QUEUES.tableDead, (job) => this.chunkGaveUp(job.data.jobId, 'the table build failed on every attempt'));
    this.deps.logger.info({ worker: this.name, concurrency }, 'job worker started');
  }

  async handleChunk(message: PgBoss.JobWithMetadata<ChunkMessage>): Promise<void> {
    const { db, logger } = this.deps;
    const { jobId, chunkIndex } = message.data;
    logger.debug({ jobId, chunkIndex, retry: message.retryCount }, 'chunk taken');
    const job = await store.jobById(db, jobId);
    // cancelled, failed or deleted: the message is simply done
    if (!job || !store.ACTIVE_STATES.includes(job.state)) return;
    const chunk = await store.countAttempt(db, jobId, chunkIndex);
    if (!chunk) return;
    if (chunk.result) {
      // delivered again after its result was stored: only the job's completion may be missing
      await this.finalize(jobId);
      return;
    }
    await store.markRunning(db, jobId);
    const started = performance.now();
    let result: { columns: Float64Array[]; status: Uint8Array; warningFlags: Uint8Array };
    try {
      result = await this.compute(job.request as unknown as ResultsRequest & { soundSpeed?: string }, chunk);
    } catch (error) {
      const text = error instanceof ProblemError ? String(error.problem.detail ?? error.problem.title) : (error as Error).message;
      logger.warn({ jobId, chunkIndex, attempt: chunk.attempts, err: error }, 'chunk failed; the queue retries it');
      await db('jobs').where({ id: jobId }).update({ error: `chunk ${chunkIndex}: ${text}` });
      throw error;
    }
    const computeMs = performance.now() - started;
    const counters = await store.storeChunkResult(db, {
      jobId,
      chunkIndex,
      points: chunk.points,
      result: packColumns(result.columns, chunk.points),
      status: Buffer.from(result.status),
      warningFlags: Buffer.from(result.warningFlags),
      worker: this.name,
      computeMs,
    });
    logger.debug({ jobId, chunkIndex, computeMs, stored: !!counters }, 'chunk computed');
    if (!counters) return; // stored by someone else meanwhile, or the job was cancelled
    // metered once, when the result is stored (the API key that submitted it, or '' from the dashboard)
    const ticket = await this.deps.meter.admit(
      { keyId: job.api_key_id ?? '', organisationId: job.organisation_id, scopes: [], limits: ADMITTED },
      JOBS_ENDPOINT,
      chunk.points,
    );
    ticket.succeed(computeMs);
    if (counters.chunks_done >= counters.chunks_total) await this.finalize(jobId);
  }

  private async compute(request: ResultsRequest & { soundSpeed?: string }, chunk: store.ChunkRow): Promise<{ columns: Float64Array[]; status: Uint8Array; warningFlags: Uint8Array }> {
    const n = chunk.points;
    const inputs = unpackColumns(chunk.input, request.inputColumns.length, n);
    const col = (name: string) => inputs[request.inputColumns.indexOf(name)];
    const given: Record<string, Float64Array> = {};
    for (const name of request.inputColumns) if (name !== 'abar' && name !== 'zbar') given[name] = col(name)!;
    const composition = request.composition ?? { abar: col('abar'), zbar: col('zbar') };
    const batch = await this.deps.eos.prepare(
      request.operation as 'evaluate' | 'invert',
      {
        ...given,
        composition: composition as never,
        method: request.method as 'exact' | 'table',
        components: request.components,
        fields: request.outputColumns,
        soundSpeed: (request.soundSpeed ?? null) as never,
      },
      ADMITTED,
    );
    const answer = await this.deps.eos.run(batch, 'typed');
    const columns = request.outputColumns.map((name) => {
      const value = answer.fields[name];
      if (value instanceof Float64Array) return value;
      return Float64Array.from(value as unknown as ArrayLike<number>, (x) => Number(x));
    });
    return { columns, status: answer.status, warningFlags: answer.warningFlags };
  }

  /** Assembles the result files of a job whose chunks are all stored and marks it completed (idempotent). */
  async finalize(jobId: string): Promise<void> {
    const { db } = this.deps;
    const finished = await db.transaction(async (trx) => {
      const job = (await trx('jobs').where({ id: jobId }).forUpdate().first()) as store.JobRow | undefined;
      if (!job || !store.ACTIVE_STATES.includes(job.state) || job.chunks_done < job.chunks_total) return undefined;
      const request = job.request as unknown as ResultsRequest;
      const results = assemble(request, await store.chunkResults(trx, jobId));
      const base = job.name.replace(/\.(csv|h5|hdf5)$/i, '').replace(/[^\w.-]+/g, '_').slice(0, 80) || 'results';
      await store.insertFile(trx, { organisationId: job.organisation_id, jobId, role: 'result-csv', fileName: `${base}-results.csv`, contentType: 'text/csv', content: resultsCsv(results) });
      await store.insertFile(trx, {
        organisationId: job.organisation_id,
        jobId,
        role: 'result-hdf5',
        fileName: `${base}-results.h5`,
        contentType: 'application/x-hdf5',
        content: await resultsHdf5(results, request, jobId),
      });
      const counts = statusCounts(results.status);
      return store.finish(trx, jobId, 'completed', { result: { statusCounts: counts, computed: counts['0'] ?? 0, ...warningSummary(results) }, error: null });
    });
    if (finished) {
      this.deps.logger.info({ jobId, worker: this.name }, 'job completed');
      await this.notify(finished);
    }
  }

  /** A chunk (or table build) gave up: the job fails, its remaining chunk messages are cancelled. */
  private async chunkGaveUp(jobId: string, why: string): Promise<void> {
    const { db, queue } = this.deps;
    const job = await store.jobById(db, jobId);
    if (!job) return;
    const failed = await store.finish(db, jobId, 'failed', { error: `${why}${job.error ? ` (last error: ${job.error})` : ''}. Nothing more is computed; only the points already computed count against the quota.` });
    if (!failed) return;
    if (failed.kind === 'batch') await queue.cancel(QUEUES.chunk, await store.pendingQueueIds(db, jobId));
    this.deps.logger.warn({ jobId, why }, 'job failed');
    await this.notify(failed);
  }

  /** Mails the job's creator that it finished or failed (a mail problem never fails the job). */
  async notify(job: store.JobRow): Promise<void> {
    const { db, mailer, config, logger } = this.deps;
    try {
      const to = await store.recipientOf(db, job);
      if (!to) return;
      const org = await db('organisations').where({ id: job.organisation_id }).first('name');
      const link = `${config.PUBLIC_URL.replace(/\/$/, '')}/jobs?${job.kind === 'batch' ? 'job' : 'table'}=${job.id}`;
      const seconds = job.started_at && job.finished_at ? (new Date(job.finished_at).getTime() - new Date(job.started_at).getTime()) / 1000 : null;
      const common = { displayName: to.displayName, kind: job.kind, name: job.name, organisationName: org?.name ?? 'your organisation', link, points: Number(job.points), seconds };
      if (job.state === 'completed') {
        const summary =
          job.kind === 'batch'
            ? `${Number(job.points)} states evaluated, ${(job.result?.['computed'] as number | undefined) ?? 0} of them computed without a status code.${warnedSentence(job.result?.['warned'])}`
            : `Grid of ${Number(job.points)} nodes; largest relative error of P, e and s: ${formatError(job.result?.['accuracy']?.['maxRelativeError'])}.`;
        mailer.send(to.email, jobFinishedMail({ ...common, summary }));
      } else if (job.state === 'failed') {
        mailer.send(to.email, jobFailedMail({ ...common, error: job.error ?? 'unknown error' }));
      }
    } catch (error) {
      logger.error({ err: error, jobId: job.id }, 'job mail not sent');
    }
  }
}

/** The physics cautions in the finished mail: how many points carry a warning (the warningFlags column says which). */
function warnedSentence(warned: unknown): string {
  if (typeof warned !== 'number' || warned === 0) return '';
  return ` ${warned} ${warned === 1 ? 'carries' : 'carry'} physics warnings (see the warningFlags column) — check them before using those numbers.`;
}

function formatError(x: unknown): string {
  return typeof x === 'number' && Number.isFinite(x) ? x.toExponential(1) : 'n/a';
}
