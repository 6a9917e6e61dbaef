/**
 * Wiring of jobs and table builds: the queue, the services, REST routes and GraphQL resolvers for
 * the gateway (startJobs), and the worker — in the gateway (unless JOBS_IN_PROCESS_WORKER=false)
 * or as a standalone process (startStandaloneWorker, used by scripts/worker.ts). Shutdown stops
 * fetching, lets running chunks finish (SHUTDOWN_TIMEOUT_MS) and closes the queue's connections
 * before the EOS pool and the database go.
 */
import { Router } from 'express';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import os from 'node:os';
import type { Config } from '../config.js';
import type { Services } from '../services.js';
import { EosPool } from '../eos/pool.js';
import { EosService } from '../eos/service.js';
import { Mailer } from '../mail/mailer.js';
import { Meter } from '../usage/meter.js';
import { TableBuildService } from '../tables/service.js';
import { tableRoutes } from '../tables/routes.js';
import { JobQueue } from './queue.js';
import { jobResolvers } from './resolvers.js';
import { jobRoutes } from './routes.js';
import { JobsService } from './service.js';
import { JobWorker } from './worker.js';

function newQueue(config: Config, logger: Logger): JobQueue {
  return new JobQueue({
    databaseUrl: config.DATABASE_URL,
    poolMax: config.JOBS_QUEUE_POOL_MAX,
    maintenanceSeconds: config.JOBS_MAINTENANCE_SECONDS,
    pollingSeconds: config.JOBS_POLL_SECONDS,
    logger,
  });
}

export function startJobs(services: Services, eos: EosService) {
  const { config, db, logger } = services;
  const log = logger.child({ component: 'jobs' });
  const queue = newQueue(config, log);
  const jobs = new JobsService(db, services.access, eos, queue, config);
  const tables = new TableBuildService(db, jobs, eos, queue, config);
  let started: Promise<unknown> = Promise.resolve();
  if (config.JOBS_IN_PROCESS_WORKER) {
    const worker = new JobWorker({ db, queue, eos, meter: services.meter, mailer: services.mailer, config, logger: log });
    started = worker.start(config.JOBS_WORKER_CONCURRENCY || 1).catch((error) => log.error({ err: error }, 'in-process job worker did not start'));
  }
  services.onClose(async () => {
    await started;
    await queue.stop(config.SHUTDOWN_TIMEOUT_MS);
  });
  const routes = Router();
  routes.use(jobRoutes(services, jobs));
  routes.use(tableRoutes(services, jobs, tables));
  return { routes, resolvers: jobResolvers(services, jobs, tables), jobs, tables, queue };
}

export interface StandaloneWorker {
  worker: JobWorker;
  stop(): Promise<void>;
}

/** A worker process of its own: its EOS pool, meter and mailer, the same queue in the database. */
export async function startStandaloneWorker(config: Config, db: Knex, logger: Logger): Promise<StandaloneWorker> {
  const pool = new EosPool({
    minThreads: config.EOS_POOL_MIN_THREADS,
    maxThreads: config.EOS_POOL_MAX_THREADS,
    taskTimeoutMs: config.EOS_TASK_TIMEOUT_MS,
    maxPendingPoints: config.EOS_MAX_PENDING_POINTS,
    tablePath: config.EOS_TABLE_PATH,
  });
  const meter = new Meter(db);
  const mailer = new Mailer(config, logger.child({ component: 'mail' }));
  const eos = new EosService(pool, meter, config.EOS_CHUNK_POINTS);
  const queue = newQueue(config, logger);
  const worker = new JobWorker({ db, queue, eos, meter, mailer, config, logger });
  const concurrency = config.JOBS_WORKER_CONCURRENCY || Math.max(1, config.EOS_POOL_MAX_THREADS || os.availableParallelism());
  await worker.start(concurrency, { warmHdf5: true });
  return {
    worker,
    async stop() {
      await queue.stop(config.SHUTDOWN_TIMEOUT_MS);
      await pool.close();
      await meter.close();
      await mailer.close();
    },
  };
}
