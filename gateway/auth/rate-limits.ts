/**
 * Limits on the routes people hammer when guessing: sign-in (failures per e-mail address and per
 * client IP), sign-up (per IP), and the routes that send mail (per address and per IP). Counters
 * live in PostgreSQL (the shared store of usage/rate-limit-store.ts), so every gateway instance
 * counts the same attempts. The 429 answers are the same whether or not the address has an
 * account — the address counts as a key either way — so they reveal nothing about who signed up.
 */
import { createHash } from 'node:crypto';
import { ipKeyGenerator, rateLimit, type Options } from 'express-rate-limit';
import type { Request, RequestHandler } from 'express';
import type { Knex } from 'knex';
import type { Config } from '../config.js';
import { PostgresRateLimitStore } from '../usage/rate-limit-store.js';
import { PROBLEM_BASE, sendProblem } from '../shared/problem.js';

export interface AuthRateLimits {
  signInPerIp: RequestHandler;
  signInPerAccount: RequestHandler;
  signUpPerIp: RequestHandler;
  mailPerIp: RequestHandler;
  mailPerAddress: RequestHandler;
  stores: PostgresRateLimitStore[];
}

// The address is whatever the caller sent (up to the 16 kB body limit, checked only later by the
// route): the counter is keyed by its hash, so every key held in memory and in rate_limit_windows
// is 43 characters whatever was sent.
const addressKey = (req: Request) => {
  const email = (req.body as { email?: unknown } | undefined)?.email;
  return typeof email === 'string' ? createHash('sha256').update(email.trim().toLowerCase()).digest('base64url') : '(none)';
};
const ipKey = (req: Request) => ipKeyGenerator(req.ip ?? '0.0.0.0');

export function authRateLimits(db: Knex, config: Config): AuthRateLimits {
  const stores: PostgresRateLimitStore[] = [];
  const make = (name: string, windowMs: number, limit: number, keyGenerator: (req: Request) => string, extra: Partial<Options>, detail: (until: string) => string) => {
    const store = new PostgresRateLimitStore(db, `${name}:`);
    stores.push(store);
    return rateLimit({
      windowMs,
      limit,
      keyGenerator,
      store,
      identifier: name,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      // attempts must not go uncounted because of a database hiccup… but neither may sign-in stop
      passOnStoreError: true,
      ...extra,
      handler: (req, res, _next, options) => {
        const resetTime = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime;
        const reset = resetTime?.getTime() ?? Date.now() + options.windowMs;
        const minutes = Math.max(1, Math.ceil((reset - Date.now()) / 60_000));
        // The text names the window's end (the same instant for every key of that window), not a
        // count of minutes from this request's arrival: two refusals a moment apart, for an address
        // that exists and one that does not, must read the same.
        const until = new Date(Math.ceil(reset / 60_000) * 60_000).toISOString().slice(11, 16) + ' UTC';
        sendProblem(res, { type: PROBLEM_BASE + 'too-many-attempts', title: 'Too many attempts', status: 429, detail: detail(until), instance: req.originalUrl, retryAfterMinutes: minutes });
      },
    });
  };
  const signInWindow = config.SIGN_IN_WINDOW_MINUTES * 60_000;
  const signInDetail = (until: string) => `Too many unsuccessful sign-ins. Try again after ${until}, or choose a new password with "Forgotten password".`;
  const mailDetail = (until: string) => `Too many requests for mail. Try again after ${until}; the mail already sent stays valid.`;
  return {
    // only failures count: a user who signs in fine is never slowed down
    signInPerIp: make('signin-ip', signInWindow, config.SIGN_IN_FAILURES_PER_IP, ipKey, { skipSuccessfulRequests: true }, signInDetail),
    signInPerAccount: make('signin-account', signInWindow, config.SIGN_IN_FAILURES_PER_ACCOUNT, addressKey, { skipSuccessfulRequests: true }, signInDetail),
    signUpPerIp: make('signup-ip', 3_600_000, config.SIGN_UPS_PER_IP, ipKey, {}, (until) => `Too many sign-ups from this network. Try again after ${until}.`),
    mailPerIp: make('mail-ip', 3_600_000, config.EMAIL_REQUESTS_PER_IP, ipKey, {}, mailDetail),
    mailPerAddress: make('mail-address', 3_600_000, config.EMAIL_REQUESTS_PER_ADDRESS, addressKey, {}, mailDetail),
    stores,
  };
}
