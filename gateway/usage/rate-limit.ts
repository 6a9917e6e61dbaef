/**
 * Per-key request rate limits from the organisation's plan (requests per second, DESIGN.md §6),
 * with express-rate-limit and the shared PostgreSQL store. Runs after API-key authentication and is
 * keyed on the key id. Headers follow the IETF RateLimit header fields draft (draft-8 form).
 */
import { rateLimit } from 'express-rate-limit';
import type { Knex } from 'knex';
import { sendProblem, PROBLEM_BASE } from '../shared/problem.js';
import type { ApiKeyContext } from '../keys/types.js';
import { PostgresRateLimitStore } from './rate-limit-store.js';

export function keyRateLimit(db: Knex) {
  const store = new PostgresRateLimitStore(db);
  const middleware = rateLimit({
    windowMs: 1_000,
    limit: (_req, res) => (res.locals['apiKey'] as ApiKeyContext).limits.requestsPerSecond,
    keyGenerator: (_req, res) => (res.locals['apiKey'] as ApiKeyContext).keyId,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    identifier: 'per-key',
    store,
    // a database hiccup must not take evaluation down: count locally and let the request through
    passOnStoreError: true,
    handler: (req, res) => {
      const key = res.locals['apiKey'] as ApiKeyContext;
      sendProblem(res, {
        type: PROBLEM_BASE + 'rate-limited',
        title: 'Too many requests',
        status: 429,
        detail: `Key ${key.keyId} is limited to ${key.limits.requestsPerSecond} request(s) per second on the ${key.limits.plan} plan. Wait for the time in the RateLimit header, batch more points per request, or move to a larger plan.`,
        instance: req.originalUrl,
      });
    },
  });
  return { middleware, store };
}
