/**
 * Builds the Express app. The middleware order lives here and only here:
 * request logs → metrics timer → EOS API (the hot path, its own security headers) → security headers
 * (helmet) → metrics, health → other API features → dashboard → 404 → problem+json errors.
 */
import express from 'express';
import helmet from 'helmet';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from './config.js';
import { healthRoutes } from './health/routes.js';
import { requestLogger } from './logger.js';
import { dashboardRoutes } from './dashboard-static.js';
import { notFound, problemHandler } from './shared/problem.js';
import { createServices, type Services } from './services.js';
import { docsRoutes } from './docs/routes.js';
import { EosPool } from './eos/pool.js';
import { EosService } from './eos/service.js';
import { eosRoutes } from './eos/routes.js';
import { eosResolvers } from './eos/resolvers.js';
import { graphqlRoutes } from './graphql/server.js';
import { authRoutes } from './auth/routes.js';
import { organisationRoutes } from './organisations/routes.js';
import { accountResolvers } from './organisations/resolvers.js';
import { keyAdminRoutes } from './keys/routes.js';
import { keyResolvers } from './keys/resolvers.js';
import { UsageService } from './usage/service.js';
import { usageRoutes } from './usage/routes.js';
import { usageResolvers } from './usage/resolvers.js';
import { OperatorService } from './operator/service.js';
import { operatorRoutes } from './operator/routes.js';
import { operatorResolvers } from './operator/resolvers.js';
import { MixtureService } from './mixtures/service.js';
import { mixtureRoutes } from './mixtures/routes.js';
import { mixtureResolvers } from './mixtures/resolvers.js';
import { startJobs } from './jobs/setup.js';
import { billingRoutes } from './billing/routes.js';
import { billingResolvers } from './billing/resolvers.js';

export interface AppDeps {
  config: Config;
  db: Knex;
  logger: Logger;
}

export async function createApp({ config, db, logger }: AppDeps): Promise<{ app: express.Express; services: Services; eos: EosService }> {
  const services = createServices(config, db, logger);
  const app = express();
  app.disable('x-powered-by');
  // Large evaluation responses: hashing every body for an ETag costs ~10 ms per 20 MB (STACK.md).
  app.set('etag', false);
  app.set('trust proxy', 'loopback');

  const requestLog = requestLogger(logger);
  if (requestLog) app.use(requestLog);

  app.use(services.metrics.middleware());

  // EOS: batches run in a worker-thread pool; REST and GraphQL share one service. Mounted before the
  // other features and helmet: the hot path of simulation codes passes no other router on its way
  // and answers with the API's own security headers.
  const eosPool = new EosPool({
    minThreads: config.EOS_POOL_MIN_THREADS,
    maxThreads: config.EOS_POOL_MAX_THREADS,
    taskTimeoutMs: config.EOS_TASK_TIMEOUT_MS,
    maxPendingPoints: config.EOS_MAX_PENDING_POINTS,
    tablePath: config.EOS_TABLE_PATH,
  });
  services.onClose(() => eosPool.close());
  services.metrics.attachPool(eosPool);
  const eosService = new EosService(eosPool, services.meter, config.EOS_CHUNK_POINTS);
  app.use(eosRoutes(services, eosService));

  // Security headers of pages and the other features (the EOS API sends its own, shared/api-headers.ts)
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"], // Angular Material sets inline styles on elements
          imgSrc: ["'self'", 'data:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          upgradeInsecureRequests: null,
        },
      },
    }),
  );

  app.use(services.metrics.routes());
  app.use(healthRoutes(db));

  // ── API features (each registers its REST router and GraphQL pieces here) ──
  app.use(docsRoutes());

  // Mixtures: saved compositions, usable as { mixture: "<id>" } in every EOS request
  const mixtureService = new MixtureService(db, services.access, services.audit);
  eosService.useSavedMixtures((organisationId, id) => mixtureService.savedNuclides(organisationId, id));
  app.use(mixtureRoutes(services, mixtureService));

  // Usage: GET /v1/usage (key with usage:read, or a signed-in member) and GraphQL `usage`
  const usageService = new UsageService(db);
  app.use(usageRoutes(services, usageService));

  // Accounts: sign-up/in, sessions, organisations, members, invitations, audit log, key management
  app.use(authRoutes(services));
  app.use(organisationRoutes(services));
  app.use(keyAdminRoutes(services));

  // Jobs and table builds: uploads and grids queued on PostgreSQL (pg-boss); one in-process worker
  // unless JOBS_IN_PROCESS_WORKER=false (standalone workers: npm run worker, README "Scaling out")
  const jobs = startJobs(services, eosService);
  app.use(jobs.routes);

  // Plan & billing: plans, plan changes, test-mode card, invoices (Stripe SDK) and the provider's signed webhook
  app.use(billingRoutes(services));

  // Operator page: every organisation's plan, limits and usage; limit overrides; service health
  const operatorService = new OperatorService(services);
  app.use(operatorRoutes(services, operatorService));

  app.use(await graphqlRoutes(services, [eosResolvers(eosService), accountResolvers(services), keyResolvers(services), usageResolvers(services, usageService), operatorResolvers(services, operatorService), mixtureResolvers(services, mixtureService), jobs.resolvers, billingResolvers(services)]));

  app.use(dashboardRoutes(config.DASHBOARD_DIR));
  app.use(notFound);
  app.use(problemHandler);
  return { app, services, eos: eosService };
}
