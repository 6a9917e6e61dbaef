/**
 * The per-key RateLimit fields are written by setRateLimitHeaders (gateway/usage/rate-limit.ts) for
 * REST and GraphQL alike. Checked here against express-rate-limit's own draft-8 output
 * (standardHeaders: 'draft-8'; draft-ietf-httpapi-ratelimit-headers-08) for the same count: within
 * the limit and beyond it (with Retry-After), so the two cannot drift apart.
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import express from 'express';
import { rateLimit } from 'express-rate-limit';
import { RATE_LIMIT_POLICY, RATE_LIMIT_WINDOW_MS, setRateLimitHeaders } from '../../gateway/usage/rate-limit.js';

const FIELDS = ['ratelimit', 'ratelimit-policy', 'retry-after'] as const;
type Info = { key: string; limit: number; used: number; resetTime?: Date };

/** What setRateLimitHeaders writes for a count, as lower-case header names. */
function ours(info: Info): Record<string, string | undefined> {
  const written = new Map<string, string>();
  const res = { headersSent: false, setHeader: (name: string, value: string) => written.set(name.toLowerCase(), value) };
  setRateLimitHeaders(res as never, info.key, info.limit, info.used, info.resetTime);
  return Object.fromEntries(FIELDS.map((f) => [f, written.get(f)]));
}

let server: http.Server;
let url = '';
const expected: Array<Record<string, string | undefined>> = [];

before(async () => {
  const app = express();
  const record = (req: express.Request) => expected.push(ours((req as express.Request & { rateLimit: Info }).rateLimit));
  app.use(
    rateLimit({
      windowMs: RATE_LIMIT_WINDOW_MS,
      limit: 2,
      keyGenerator: () => 'fwk-test-key-id',
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      identifier: RATE_LIMIT_POLICY,
      handler: (req, res) => {
        record(req);
        res.status(429).end();
      },
    }),
  );
  app.get('/', (req, res) => {
    record(req);
    res.end();
  });
  server = http.createServer(app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  url = `http://127.0.0.1:${(server.address() as AddressInfo).port}/`;
});
after(() => new Promise<void>((r) => server.close(() => r())));

test('setRateLimitHeaders writes the fields express-rate-limit writes (draft 8), within and beyond the limit', async () => {
  // until one request is refused (a window may end between two requests; the counts then restart)
  const statuses: number[] = [];
  for (let i = 0; i < 50 && !statuses.includes(429); i++) {
    const res = await fetch(url);
    statuses.push(res.status);
    const library = Object.fromEntries(FIELDS.map((f) => [f, res.headers.get(f) ?? undefined]));
    assert.deepEqual(expected[i], library, `request ${i + 1}`);
  }
  assert.ok(statuses.includes(200) && statuses.includes(429), statuses.join(','));
  assert.match(expected[0]!['ratelimit-policy']!, /^"per-key"; q=2; w=1; pk=:[A-Za-z0-9+/=]+:$/);
  assert.ok(expected[statuses.indexOf(429)]!['retry-after'] !== undefined, 'Retry-After beyond the limit');
});
