/**
 * The services one gateway instance holds, built once and closed once (graceful shutdown flushes
 * usage and last-used times before the database pool closes).
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from './config.js';
import { KeyService } from './keys/service.js';
import { Meter } from './usage/meter.js';
import { keyRateLimit } from './usage/rate-limit.js';
import { Metrics } from './metrics.js';

export interface Services {
  config: Config;
  db: Knex;
  logger: Logger;
  keys: KeyService;
  meter: Meter;
  rateLimit: ReturnType<typeof keyRateLimit>;
  metrics: Metrics;
  /** Extra closers registered by features (e.g. the EOS worker pool). */
  onClose(fn: () => Promise<void>): void;
  close(): Promise<void>;
}

export function createServices(config: Config, db: Knex, logger: Logger): Services {
  const keys = new KeyService(db);
  let metrics: Metrics | undefined = undefined;
  const meter = new Meter(db, (points, endpoint) => metrics?.points.inc({ endpoint }, points));
  metrics = new Metrics(db, () => meter.flushLagSeconds());
  const rateLimit = keyRateLimit(db);
  const closers: Array<() => Promise<void>> = [];
  return {
    config,
    db,
    logger,
    keys,
    meter,
    rateLimit,
    metrics,
    onClose: (fn) => closers.push(fn),
    async close() {
      for (const fn of closers.reverse()) await fn().catch((error) => logger.error({ err: error }, 'close failed'));
      await meter.close();
      await keys.close();
      await rateLimit.store.shutdown();
    },
  };
}
