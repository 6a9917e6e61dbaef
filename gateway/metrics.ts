/**
 * Prometheus metrics (prom-client) on /metrics: request durations by route and status, points
 * evaluated, worker-pool queue and utilisation, database pool, metering flush lag. Each app gets
 * its own registry so several gateways in one process (tests) never collide.
 */
import { Router, type RequestHandler } from 'express';
import type { Knex } from 'knex';
import client from 'prom-client';

export interface PoolStats {
  queueSize(): number;
  utilization(): number;
  threads(): number;
}

export class Metrics {
  readonly registry = new client.Registry();
  readonly httpDuration: client.Histogram<'method' | 'route' | 'status'>;
  readonly points: client.Counter<'endpoint'>;
  private pool: PoolStats | undefined;

  constructor(db: Knex, flushLag: () => number) {
    client.collectDefaultMetrics({ register: this.registry, prefix: 'fermiwell_' });
    this.httpDuration = new client.Histogram({
      name: 'fermiwell_http_request_duration_seconds',
      help: 'HTTP request duration by route and status',
      labelNames: ['method', 'route', 'status'],
      buckets: [0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
      registers: [this.registry],
    });
    this.points = new client.Counter({
      name: 'fermiwell_points_evaluated_total',
      help: 'Thermodynamic states evaluated (one inversion counts one point)',
      labelNames: ['endpoint'],
      registers: [this.registry],
    });
    const self = this;
    new client.Gauge({
      name: 'fermiwell_pool_queue_depth',
      help: 'EOS batches waiting for a worker thread',
      registers: [this.registry],
      collect() {
        this.set(self.pool?.queueSize() ?? 0);
      },
    });
    new client.Gauge({
      name: 'fermiwell_pool_utilization_ratio',
      help: 'Fraction of worker-thread time spent computing',
      registers: [this.registry],
      collect() {
        this.set(self.pool?.utilization() ?? 0);
      },
    });
    new client.Gauge({
      name: 'fermiwell_pool_threads',
      help: 'Worker threads in the EOS pool',
      registers: [this.registry],
      collect() {
        this.set(self.pool?.threads() ?? 0);
      },
    });
    new client.Gauge({
      name: 'fermiwell_db_pool_connections',
      help: 'Database connections by state',
      labelNames: ['state'],
      registers: [this.registry],
      collect() {
        const pool = (db.client as { pool?: { numUsed(): number; numFree(): number; numPendingAcquires(): number } }).pool;
        this.set({ state: 'used' }, pool?.numUsed() ?? 0);
        this.set({ state: 'free' }, pool?.numFree() ?? 0);
        this.set({ state: 'pending' }, pool?.numPendingAcquires() ?? 0);
      },
    });
    new client.Gauge({
      name: 'fermiwell_metering_flush_lag_seconds',
      help: 'Seconds since usage was last written to the database',
      registers: [this.registry],
      collect() {
        this.set(flushLag());
      },
    });
  }

  attachPool(pool: PoolStats) {
    this.pool = pool;
  }

  /**
   * Times every request; the route label is the matched route pattern, never the raw URL. The
   * histogram's child per (method, route, status) is looked up once and kept (prom-client would
   * otherwise validate and hash the labels on every request).
   */
  middleware(): RequestHandler {
    const children = new Map<string, client.Histogram.Internal<'method' | 'route' | 'status'>>();
    const child = (method: string, route: string, status: string): client.Histogram.Internal<'method' | 'route' | 'status'> => {
      const id = `${method} ${status} ${route}`;
      let found = children.get(id);
      if (found === undefined) {
        if (children.size >= 10_000) children.clear(); // route labels are patterns: never near this
        found = this.httpDuration.labels(method, route, status);
        children.set(id, found);
      }
      return found;
    };
    return (req, res, next) => {
      const started = performance.now();
      res.once('finish', () => {
        // a feature may name the route for requests refused before its route matched (res.locals.route)
        const named = res.locals['route'];
        const route = typeof named === 'string' ? named : req.route?.path ? req.baseUrl + String(req.route.path) : req.baseUrl || 'unmatched';
        child(req.method, route, String(res.statusCode)).observe((performance.now() - started) / 1000);
      });
      next();
    };
  }

  routes(): Router {
    const router = Router();
    router.get('/metrics', async (_req, res) => {
      res.type(this.registry.contentType).send(await this.registry.metrics());
    });
    return router;
  }
}
