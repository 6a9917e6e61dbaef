/**
 * Load on loopback (autocannon) against a gateway process, one key per plan, at three times the
 * plan's request rate: in every one-second window of the server the first `limit` requests are
 * served (200) and the rest refused (429 rate-limited), and metering is exact under load — every
 * request sent is in usage_minutes after the flush, refused ones as errors, and the points are those
 * of the served requests only. Plans: Free 10/s and Group 100/s (migrations/002_plans-keys-usage.ts);
 * Facility's 1000/s needs more than 3000 requests per second, beyond this 2-core test machine (see
 * README "Load, faults and backups" and `npm run soak`).
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { Fixtures } from '../support/fixtures.js';
import { startGatewayProcess, type GatewayProcess } from './support/gateway-process.js';
import { accountingOf, describeRun, runLoad, startOfSecond } from './load-runner.js';

let gateway: GatewayProcess;
let fx: Fixtures;

before(async () => {
  gateway = await startGatewayProcess();
  fx = new Fixtures();
});
after(async () => {
  await gateway?.stop();
  await fx?.close();
});

const POINTS = 3;

for (const { plan, limit, rate, seconds } of [
  { plan: 'free' as const, limit: 10, rate: 30, seconds: 3 },
  { plan: 'group' as const, limit: 100, rate: 300, seconds: 3 },
]) {
  test(`${plan} plan under load at ${rate}/s: ${limit} served per server window, the rest 429; usage exact`, async (t) => {
    const key = await fx.keyOnPlan(plan);
    await startOfSecond();
    const amount = rate * seconds;
    const run = await runLoad({ url: gateway.url, token: key.token, rate, amount, points: POINTS });
    const ok = run.status['200'] ?? 0;
    const limited = run.status['429'] ?? 0;
    assert.equal(run.errors, 0, 'no socket errors or timeouts');
    assert.equal(ok + limited, amount, `only 200 and 429: ${JSON.stringify(run.status)}`);
    assert.ok(limited > 0, 'the load passed the limit');
    assert.ok(ok >= limit, 'a full window was served');

    const acc = await accountingOf(fx.db, key.id, limit, amount);
    t.diagnostic(describeRun(plan, limit, rate, run, acc));
    assert.equal(acc.hits, amount, 'the rate-limit rows saw every request');
    assert.ok(acc.windows.length >= seconds, `the run spans ${acc.windows.length} windows`);
    assert.ok(acc.windows.some((w) => w.hits > limit), 'some window saw more than the limit');
    // per window: the first `limit` served, the rest refused — summed over the windows
    assert.equal(ok, acc.expectedServed, `served = Σ min(hits, ${limit}) over ${JSON.stringify(acc.windows)}`);
    assert.equal(limited, acc.expectedRefused, 'refused = Σ max(0, hits − limit)');
    // metering: requests sent = requests recorded; points = points of the served requests
    assert.deepEqual(acc.usage, { requests: amount, points: ok * POINTS, errors: limited });
  });
}
