/**
 * Per-key request rate limits from the organisation's plan (requests per second, DESIGN.md §6),
 * with express-rate-limit and the shared PostgreSQL store. Runs after API-key authentication and is
 * keyed on the key id. Headers follow the IETF RateLimit header fields draft (draft-8 form).
 */
import { createHash } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { Knex } from 'knex';
import { sendProblem, PROBLEM_BASE } from '../shared/problem.js';
import type { ApiKeyContext } from '../keys/types.js';
import { PostgresRateLimitStore } from './rate-limit-store.js';

/** The policy name in the RateLimit headers (express-rate-limit's `identifier`). */
export const RATE_LIMIT_POLICY = 'per-key';
export const RATE_LIMIT_WINDOW_MS = 1_000;

/**
 * The RateLimit and RateLimit-Policy fields of the IETF draft (draft-ietf-httpapi-ratelimit-headers-08),
 * in the exact form express-rate-limit writes them for REST (`"per-key"; r=…; t=…` and
 * `"per-key"; q=…; w=…; pk=:…:`), for callers that count outside it (GraphQL). The partition key
 * is express-rate-limit's: base64 of the first 12 hex digits of SHA-256 of the key id.
 */
export function setRateLimitHeaders(res: Response, keyId: string, limit: number, hits: number, resetTime: Date | undefined): void {
  if (res.headersSent) return;
  const remaining = Math.max(0, limit - hits);
  const reset = resetTime ? Math.max(0, Math.ceil((resetTime.getTime() - Date.now()) / 1000)) : Math.ceil(RATE_LIMIT_WINDOW_MS / 1000);
  const pk = partitionKey(keyId);
  res.setHeader('RateLimit', `"${RATE_LIMIT_POLICY}"; r=${remaining}; t=${reset}`);
  res.setHeader('RateLimit-Policy', `"${RATE_LIMIT_POLICY}"; q=${limit}; w=${Math.ceil(RATE_LIMIT_WINDOW_MS / 1000)}; pk=:${pk}:`);
  if (hits > limit) res.setHeader('Retry-After', String(reset));
}

/** express-rate-limit's partition key of a key id, hashed once per key (not once per request). */
const partitionKeys = new Map<string, string>();
function partitionKey(keyId: string): string {
  let pk = partitionKeys.get(keyId);
  if (pk === undefined) {
    if (partitionKeys.size >= 10_000) partitionKeys.clear();
    pk = Buffer.from(createHash('sha256').update(keyId).digest('hex').slice(0, 12)).toString('base64');
    partitionKeys.set(keyId, pk);
  }
  return pk;
}

/** The headers of the count express-rate-limit just made (req.rateLimit), when it made one. */
function countHeaders(req: Request, res: Response): void {
  const info = (req as Request & { rateLimit?: { key: string; limit: number; used: number; resetTime?: Date } }).rateLimit;
  if (info) setRateLimitHeaders(res, info.key, info.limit, info.used, info.resetTime);
}

export function keyRateLimit(db: Knex) {
  const store = new PostgresRateLimitStore(db);
  const limiter = rateLimit({
    windowMs: RATE_LIMIT_WINDOW_MS,
    limit: (_req, res) => (res.locals['apiKey'] as ApiKeyContext).limits.requestsPerSecond,
    keyGenerator: (_req, res) => (res.locals['apiKey'] as ApiKeyContext).keyId,
    // the draft-8 fields are written by setRateLimitHeaders (same form; tests/gateway/rate-limit-headers.test.ts
    // compares it with the library's), which hashes each key once instead of on every request
    standardHeaders: false,
    legacyHeaders: false,
    identifier: RATE_LIMIT_POLICY,
    store,
    // a database hiccup must not take evaluation down: count locally and let the request through
    passOnStoreError: true,
    // the library's checks of its own configuration (proxy set-up, key shape, one count per request)
    // run on every request; this configuration is fixed and covered by tests
    validate: false,
    handler: (req, res) => {
      countHeaders(req, res);
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
  const middleware: RequestHandler = (req, res, next) =>
    limiter(req, res, (error?: unknown) => {
      if (error === undefined) countHeaders(req, res);
      next(error);
    });
  return { middleware, store };
}
