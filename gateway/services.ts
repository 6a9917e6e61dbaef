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
import { Mailer } from './mail/mailer.js';
import { AuditLog } from './audit/service.js';
import { AccessService } from './organisations/access.js';
import { OrganisationService } from './organisations/service.js';
import { AuthService } from './auth/service.js';
import { authRateLimits, type AuthRateLimits } from './auth/rate-limits.js';
import { KeyManagement } from './keys/management.js';
import { BillingService } from './billing/service.js';
import { BillingWebhooks } from './billing/webhooks.js';
import { QuotaMails } from './billing/quota-mail.js';
import { createPaymentProvider } from './billing/stripe-client.js';

export interface Services {
  config: Config;
  db: Knex;
  logger: Logger;
  keys: KeyService;
  meter: Meter;
  rateLimit: ReturnType<typeof keyRateLimit>;
  metrics: Metrics;
  // accounts (issue 6): mail, audit log, the role matrix's enforcement, sessions, organisations, key management
  mailer: Mailer;
  audit: AuditLog;
  access: AccessService;
  auth: AuthService;
  authLimits: AuthRateLimits;
  organisations: OrganisationService;
  keyAdmin: KeyManagement;
  // billing (issue 7): plans, card, invoices through the payment provider; its webhook events
  billing: BillingService;
  billingWebhooks: BillingWebhooks;
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
  const mailer = new Mailer(config, logger.child({ component: 'mail' }));
  const audit = new AuditLog(db, logger);
  const access = new AccessService(db);
  const auth = new AuthService(db, config, mailer, audit, logger.child({ component: 'auth' }));
  const authLimits = authRateLimits(db, config);
  const organisations = new OrganisationService(db, config, access, audit, mailer, keys);
  const keyAdmin = new KeyManagement(keys, access, audit, config);
  const billing = new BillingService(db, config, createPaymentProvider(config), access, audit, mailer, keys, logger.child({ component: 'billing' }));
  organisations.beforeDelete((organisationId, trx) => billing.endForDeletedOrganisation(organisationId, trx));
  const billingWebhooks = new BillingWebhooks(db, billing, keys, audit, logger.child({ component: 'billing-webhooks' }));
  meter.observeQuota(new QuotaMails(db, () => billing, `${config.PUBLIC_URL}/usage`, logger.child({ component: 'quota-mail' })).observe);
  return {
    config,
    db,
    logger,
    keys,
    meter,
    rateLimit,
    metrics,
    mailer,
    audit,
    access,
    auth,
    authLimits,
    organisations,
    keyAdmin,
    billing,
    billingWebhooks,
    onClose: (fn) => closers.push(fn),
    async close() {
      for (const fn of closers.reverse()) await fn().catch((error) => logger.error({ err: error }, 'close failed'));
      billing.close();
      await meter.close();
      await keys.close();
      await rateLimit.store.shutdown();
      for (const store of authLimits.stores) await store.shutdown();
      await mailer.close();
    },
  };
}
