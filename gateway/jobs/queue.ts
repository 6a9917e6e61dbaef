/**
 * The job queue: pg-boss 10 on the same PostgreSQL, in its own schema (JOB_QUEUE_SCHEMA, created
 * with its queues by migrations/005_jobs.ts). Because the queue lives in the database, any number
 * of gateways and standalone workers (`npm run worker`) on any number of machines share it: a
 * worker takes a chunk with SELECT … FOR UPDATE SKIP LOCKED (pg-boss's fetch), so two workers never
 * hold the same chunk at once.
 *
 * Delivery is at least once: a chunk whose worker dies stays "active" until its expiry
 * (JOBS_CHUNK_EXPIRE_SECONDS), then pg-boss's maintenance (every JOBS_MAINTENANCE_SECONDS, run by
 * whichever instance's turn it is) puts it back for a retry; after JOBS_CHUNK_RETRIES retries it goes
 * to the dead-letter queue and the job is marked failed. The worker makes a repeated delivery
 * harmless (gateway/jobs/worker.ts).
 *
 * Chunk messages are inserted in the same database transaction as the job's rows (insertIn), so a
 * job never exists without its chunks queued, nor chunks without their job.
 */
import PgBoss from 'pg-boss';
import type { Knex } from 'knex';
import type { Logger } from 'pino';

export const JOB_QUEUE_SCHEMA = 'pgboss';
export const QUEUES = {
  chunk: 'fw-job-chunk',
  chunkDead: 'fw-job-chunk-dead',
  table: 'fw-table-build',
  tableDead: 'fw-table-build-dead',
} as const;

export interface QueueOptions {
  databaseUrl: string;
  /** Connections of pg-boss's own pool. */
  poolMax: number;
  /** Maintenance (expiry → retry, archiving) interval; the shortest instance's interval wins. */
  maintenanceSeconds: number;
  pollingSeconds: number;
  logger: Logger;
}

export interface ChunkMessage {
  jobId: string;
  chunkIndex: number;
}

export interface TableMessage {
  jobId: string;
}

/** pg-boss's Db interface over a knex transaction (pg-boss writes $1…$n placeholders, knex wants ?). */
export function knexDb(trx: Knex | Knex.Transaction): PgBoss.Db {
  return {
    async executeSql(text: string, values: unknown[] = []) {
      const ordered: unknown[] = [];
      const sql = text.replace(/\$(\d+)/g, (_, n: string) => {
        const value = values[Number(n) - 1];
        ordered.push(value === undefined ? null : value);
        return '?';
      });
      const result = (await trx.raw(sql, ordered as Knex.RawBinding[])) as { rows: unknown[] };
      return { rows: result.rows };
    },
  };
}

export class JobQueue {
  readonly boss: PgBoss;
  private started: Promise<void> | undefined;
  private stopped = false;

  constructor(private readonly options: QueueOptions) {
    this.boss = new PgBoss({
      connectionString: options.databaseUrl,
      schema: JOB_QUEUE_SCHEMA,
      application_name: 'fermiwell-jobs',
      max: options.poolMax,
      // the schema comes from migrations/005_jobs.ts; a newer pg-boss would migrate it on start
      migrate: true,
      supervise: true,
      schedule: false,
      maintenanceIntervalSeconds: options.maintenanceSeconds,
      monitorStateIntervalSeconds: 60,
    });
    this.boss.on('error', (error) => options.logger.error({ err: error }, 'job queue error'));
  }

  start(): Promise<void> {
    this.started ??= this.boss.start().then(() => undefined);
    return this.started;
  }

  /** Queues chunk messages inside the caller's transaction. */
  async insertIn(trx: Knex.Transaction, jobs: PgBoss.JobInsert[]): Promise<void> {
    await this.start();
    for (let i = 0; i < jobs.length; i += 1000) await this.boss.insert(jobs.slice(i, i + 1000), { db: knexDb(trx) });
  }

  async send(name: string, data: object, options: PgBoss.SendOptions): Promise<string | null> {
    await this.start();
    return this.boss.send(name, data, options);
  }

  /** Cancels queued messages (running ones finish and are discarded by the worker). */
  async cancel(name: string, ids: string[]): Promise<void> {
    if (ids.length === 0) return;
    await this.start();
    for (let i = 0; i < ids.length; i += 1000) await this.boss.cancel(name, ids.slice(i, i + 1000));
  }

  async work<T>(name: string, handler: (job: PgBoss.JobWithMetadata<T>) => Promise<void>): Promise<string> {
    await this.start();
    return this.boss.work<T>(name, { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: this.options.pollingSeconds }, async (jobs) => {
      for (const job of jobs) await handler(job);
    });
  }

  /** Stops fetching, waits for running handlers (up to timeoutMs), closes pg-boss's pool. */
  async stop(timeoutMs: number): Promise<void> {
    if (this.stopped || !this.started) return;
    this.stopped = true;
    await this.started.catch(() => undefined);
    // graceful: running handlers finish; anything still running at the timeout is failed, so it is retried at once elsewhere
    await this.boss.stop({ graceful: true, close: true, wait: true, timeout: Math.max(1000, timeoutMs) });
  }
}
