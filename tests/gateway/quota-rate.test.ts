/**
 * Monthly points quota (429 quota-exceeded, nothing computed or billed) and the per-key request
 * rate (Free plan: 10 requests per second; 429 rate-limited with the IETF RateLimit headers), on
 * REST and GraphQL, against the real database.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures } from '../support/fixtures.js';
import { expectProblem, graphql, postJson } from '../support/api.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let fx: Fixtures;

before(async () => {
  gateway = await startTestGateway();
  fx = new Fixtures();
});
after(async () => {
  await gateway.close();
  await fx.close();
});

const FREE_QUOTA = 2_000_000;
const body = (points: number) => ({ density: new Array(points).fill(1e6), temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure'] });

/** Checks of usage_minutes, run after one graceful restart has flushed the meter (the last test). */
const checks: Array<() => Promise<void>> = [];

describe('monthly points quota', () => {
  test('a request that would pass the quota → 429 with what to do; nothing is billed; a smaller one still fits', async () => {
    const key = await fx.keyOnPlan('free');
    await fx.seedUsage(key.org.id, FREE_QUOTA - 3);
    const over = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(4));
    const problem = await expectProblem(over, 429, 'quota-exceeded');
    assert.equal(problem.pointsRequested, 4);
    assert.equal(problem.pointsLeft, 3);
    assert.equal(problem.quota, FREE_QUOTA);
    assert.match(problem.detail, /Nothing was computed or billed/);
    assert.match(problem.detail, /Plan & billing/);

    const fits = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(3));
    assert.equal(fits.status, 200);
    const none = await postJson(`${gateway.url}/v1/eos/evaluate?`, key.token, body(1));
    await expectProblem(none, 429, 'quota-exceeded');

    checks.push(async () => {
      const usage = await fx.usage(key.org.id);
      assert.deepEqual(usage.get('/v1/eos/evaluate'), { requests: 3, points: 3, errors: 2 }, 'only the admitted request is billed');
    });
  });

  test('GraphQL draws on the same quota and says quota-exceeded', async () => {
    const key = await fx.keyOnPlan('free');
    await fx.seedUsage(key.org.id, FREE_QUOTA);
    const res = await graphql(gateway.url, key.token, 'query { evaluate(input: { density: 1e6, temperature: 1e8, composition: { mixture: "he4" } }) { status } }');
    assert.equal(res.body.errors?.[0]?.extensions?.['code'], 'quota-exceeded');
    assert.equal(res.body.errors?.[0]?.extensions?.['problem']?.pointsLeft, 0);
  });

  test('a larger plan has room: Group quota is 500 000 000', async () => {
    const key = await fx.keyOnPlan('group');
    await fx.seedUsage(key.org.id, FREE_QUOTA + 10);
    const res = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(5));
    assert.equal(res.status, 200);
  });
});

/** Waits until just after the start of a one-second rate-limit window, so a burst lands in one window. */
async function startOfWindow() {
  const ms = Date.now() % 1000;
  await new Promise((r) => setTimeout(r, 1000 - ms + 20));
}

describe('per-key rate limit (Free: 10 requests per second)', () => {
  test('a burst within the limit succeeds, with RateLimit headers', async () => {
    const key = await fx.keyOnPlan('free');
    await startOfWindow();
    const results = await Promise.all(Array.from({ length: 5 }, () => postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(1))));
    for (const r of results) assert.equal(r.status, 200);
    const policy = results[0]!.headers.get('ratelimit-policy') ?? '';
    assert.match(policy, /q=10/);
    assert.match(policy, /w=1/);
    assert.match(results[0]!.headers.get('ratelimit') ?? '', /r=\d+/);
  });

  test('a burst beyond it gets 429 rate-limited with RateLimit headers and Retry-After; other keys are not affected', async () => {
    const key = await fx.keyOnPlan('free');
    const other = await fx.keyOnPlan('free');
    await startOfWindow();
    // 35 requests span at most three one-second windows on any machine, so one window sees more than 10
    const results = await Promise.all(Array.from({ length: 35 }, () => postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(1))));
    const limited = results.filter((r) => r.status === 429);
    const ok = results.filter((r) => r.status === 200);
    assert.ok(limited.length > 0, 'some requests were limited');
    assert.ok(ok.length >= 10, 'the first ten of the window went through');
    assert.equal(ok.length + limited.length, 35, 'nothing but 200 and 429');
    const first = limited[0]!;
    const problem = await expectProblem(first, 429, 'rate-limited');
    assert.match(problem.detail, /10 request\(s\) per second/);
    assert.match(first.headers.get('ratelimit') ?? '', /r=0/);
    assert.match(first.headers.get('ratelimit-policy') ?? '', /q=10/);
    assert.ok(Number(first.headers.get('retry-after')) >= 0, 'Retry-After header');
    const unaffected = await postJson(`${gateway.url}/v1/eos/evaluate`, other.token, body(1));
    assert.equal(unaffected.status, 200);

    checks.push(async () => {
      const row = (await fx.usage(key.org.id)).get('/v1/eos/evaluate')!;
      assert.equal(row.requests, 35, 'limited requests are counted');
      assert.equal(row.errors, limited.length);
      assert.equal(row.points, ok.length, 'only served requests are billed');
    });
  });

  test('GraphQL shares the key\'s counter', async () => {
    const key = await fx.keyOnPlan('free');
    await startOfWindow();
    const q = 'query { evaluate(input: { density: 1e6, temperature: 1e8, composition: { mixture: "he4" }, fields: [pressure] }) { status } }';
    const results = await Promise.all(Array.from({ length: 35 }, () => graphql(gateway.url, key.token, q)));
    const codes = results.map((r) => r.body.errors?.[0]?.extensions?.['code'] ?? 'ok');
    assert.ok(codes.includes('rate-limited'), JSON.stringify(codes));
    assert.ok(codes.filter((c) => c === 'ok').length >= 10, 'ten went through');
    // the same RateLimit fields as REST (IETF draft-ietf-httpapi-ratelimit-headers-08 form)
    const served = results[codes.indexOf('ok')]!;
    assert.match(served.headers.get('ratelimit-policy') ?? '', /^"per-key"; q=10; w=1; pk=:[A-Za-z0-9+/=]+:$/);
    assert.match(served.headers.get('ratelimit') ?? '', /^"per-key"; r=\d+; t=\d+$/);
    const limited = results[codes.indexOf('rate-limited')]!;
    assert.match(limited.headers.get('ratelimit') ?? '', /r=0/);
    assert.ok(Number(limited.headers.get('retry-after')) >= 0, 'Retry-After header');
  });

  test('GraphQL and REST write identical RateLimit-Policy fields for one key', async () => {
    const key = await fx.keyOnPlan('free');
    await startOfWindow();
    const rest = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(1));
    const gql = await graphql(gateway.url, key.token, 'query { evaluate(input: { density: 1e6, temperature: 1e8, composition: { mixture: "he4" }, fields: [pressure] }) { status } }');
    assert.equal(rest.headers.get('ratelimit-policy'), gql.headers.get('ratelimit-policy'));
  });
});

test('usage after a graceful restart: refused requests counted as errors, only served points billed', async () => {
  await gateway.close();
  gateway = await startTestGateway();
  assert.equal(checks.length, 2);
  for (const check of checks) await check();
});
