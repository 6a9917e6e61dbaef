/**
 * Metering exactness against the real database: N concurrent requests → exactly N requests and
 * their points in usage_minutes; a SIGTERM in the middle of a load loses nothing (the gateway runs
 * as its own process, `node --import tsx gateway/server.ts`); /metrics exposes the series of
 * gateway/metrics.ts.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import path from 'node:path';
import readline from 'node:readline';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Fixtures } from '../support/fixtures.js';
import { graphql, postBinary, postJson } from '../support/api.js';
import { repoRoot } from '../../gateway/config.js';
import type { RunningGateway } from '../../gateway/server.js';

let fx: Fixtures;
before(() => {
  fx = new Fixtures();
});
after(() => fx.close());

const body = (points: number) => ({ density: Array.from({ length: points }, (_, i) => 10 ** (2 + (i % 7))), temperature: 1e8, composition: { mixture: 'c12-o16' }, fields: ['pressure'] });

describe('usage records are exact', () => {
  let gateway: RunningGateway;
  /** Checks of usage_minutes, run once after a restart has flushed the meter (the last test). */
  const checks: Array<() => Promise<void>> = [];
  before(async () => {
    // no free-energy table: method "table" answers 501, the failed request recorded below
    gateway = await startTestGateway({ EOS_TABLE_PATH: '' });
  });
  after(() => gateway.close());

  test('N concurrent requests → exactly N requests and their points', async () => {
    const key = await fx.keyOnPlan('group');
    const n = 24;
    const results = await Promise.all(Array.from({ length: n }, (_, i) => postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(i + 1))));
    for (const r of results) assert.equal(r.status, 200, JSON.stringify(r.body));
    const expected = results.reduce((s, r) => s + r.body.meta.points, 0);
    assert.equal(expected, (n * (n + 1)) / 2);
    // other transports and endpoints, each under its own label
    const bin = await postBinary(`${gateway.url}/v1/eos/evaluate?inputs=density,temperature&mixture=he4&fields=pressure`, key.token, [[1e5, 1e6, 1e7], [1e8, 1e8, 1e8]]);
    assert.equal(bin.status, 200);
    const inv = await postJson(`${gateway.url}/v1/eos/invert`, key.token, { density: [1e5, 1e6], specificEnergy: 1e17, composition: { abar: 4, zbar: 2 }, fields: ['temperature'] });
    assert.equal(inv.status, 200);
    const gql = await graphql(gateway.url, key.token, 'query { regime(input: { density: [1e5, 1e6, 1e7, 1e8], temperature: 1e8, composition: { mixture: "fe56" } }) { status } }');
    assert.equal(gql.body.errors, undefined);

    checks.push(async () => {
      const usage = await fx.usage(key.org.id);
      assert.deepEqual(usage.get('/v1/eos/evaluate'), { requests: n + 1, points: expected + 3, errors: 0 });
      assert.deepEqual(usage.get('/v1/eos/invert'), { requests: 1, points: 2, errors: 0 });
      assert.deepEqual(usage.get('graphql:regime'), { requests: 1, points: 4, errors: 0 });
      const rows = await fx.db('usage_minutes').where({ organisation_id: key.org.id, endpoint: '/v1/eos/evaluate' });
      for (const row of rows) {
        assert.equal(row.api_key_id, key.id, 'per key');
        assert.equal(row.latency_buckets.reduce((a: number, b: number) => a + b, 0), row.requests, 'one latency sample per request');
      }
    });
  });

  test('a failed request (table method: 501) is recorded as an error with no points', async () => {
    const key = await fx.keyOnPlan('free');
    const res = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...body(3), method: 'table' });
    assert.equal(res.status, 501);
    checks.push(async () => assert.deepEqual((await fx.usage(key.org.id)).get('/v1/eos/evaluate'), { requests: 1, points: 0, errors: 1 }));
  });

  test('a client that goes away mid-batch is not billed', async () => {
    const key = await fx.keyOnPlan('group');
    const abort = new AbortController();
    const n = 60_000;
    const call = fetch(`${gateway.url}/v1/eos/evaluate`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', authorization: `Bearer ${key.token}` },
      body: JSON.stringify({ density: Array.from({ length: n }, (_, i) => 10 ** (-6 + (12 * i) / n)), temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['pressure'] }),
      signal: abort.signal,
    });
    // wait until the batch is in the pool, then hang up
    for (let i = 0; i < 500; i++) {
      const metrics = await (await fetch(`${gateway.url}/metrics`)).text();
      if (/^fermiwell_pool_utilization_ratio (?!0$)/m.test(metrics) || /^fermiwell_pool_queue_depth [1-9]/m.test(metrics)) break;
      await new Promise((r) => setTimeout(r, 20));
    }
    abort.abort();
    await assert.rejects(call);
    checks.push(async () => assert.deepEqual((await fx.usage(key.org.id)).get('/v1/eos/evaluate'), { requests: 1, points: 0, errors: 1 }));
  });

  test('/metrics exposes the series of gateway/metrics.ts', async () => {
    const key = await fx.keyOnPlan('group');
    const counter = /^fermiwell_points_evaluated_total\{endpoint="\/v1\/eos\/evaluate"\} (\d+)$/m;
    const before = Number(counter.exec(await (await fetch(`${gateway.url}/metrics`)).text())?.[1] ?? 0);
    await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body(7));
    await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density: 'x' });
    const res = await fetch(`${gateway.url}/metrics`);
    assert.equal(res.status, 200);
    assert.match(res.headers.get('content-type') ?? '', /text\/plain/);
    const text = await res.text();
    const series = [
      /^fermiwell_http_request_duration_seconds_bucket\{.*route="\/v1\/eos\/evaluate".*status="200".*\} \d+/m,
      /^fermiwell_http_request_duration_seconds_count\{.*route="\/v1\/eos\/evaluate".*status="400".*\} [1-9]\d*$/m,
      /^fermiwell_pool_queue_depth \d+$/m,
      /^fermiwell_pool_utilization_ratio [\d.e-]+$/m,
      /^fermiwell_pool_threads [1-9]\d*$/m,
      /^fermiwell_db_pool_connections\{state="used"\} \d+$/m,
      /^fermiwell_db_pool_connections\{state="free"\} \d+$/m,
      /^fermiwell_db_pool_connections\{state="pending"\} \d+$/m,
      /^fermiwell_metering_flush_lag_seconds [\d.e-]+$/m,
      /^fermiwell_process_cpu_seconds_total /m,
      /^fermiwell_nodejs_eventloop_lag_seconds /m,
    ];
    for (const s of series) assert.match(text, s);
    assert.equal(Number(counter.exec(text)?.[1]) - before, 7, 'points evaluated counted');
    assert.doesNotMatch(text, /route="\/v1\/eos\/evaluate\?/, 'the route label is the pattern, never the raw URL');
  });

  test('all of the above are in usage_minutes exactly, once the meter has flushed (graceful restart)', async () => {
    await gateway.close();
    gateway = await startTestGateway();
    assert.equal(checks.length, 3);
    for (const check of checks) await check();
  });
});

describe('graceful shutdown under load', () => {
  test('SIGTERM in the middle of a load loses nothing: every successful response is billed, nothing else', async () => {
    const key = await fx.keyOnPlan('group');
    const child = spawn(process.execPath, ['--import', 'tsx', path.join(repoRoot, 'gateway', 'server.ts')], {
      cwd: repoRoot,
      env: { ...process.env, DATABASE_URL: testDatabaseUrl(), HOST: '127.0.0.1', PORT: '0', LOG_LEVEL: 'info', NODE_ENV: 'test', SHUTDOWN_TIMEOUT_MS: '20000' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
    let stderr = '';
    child.stderr.on('data', (b: Buffer) => (stderr += b));
    const url = await new Promise<string>((resolve, reject) => {
      const lines = readline.createInterface({ input: child.stdout });
      lines.on('line', (line) => {
        try {
          const entry = JSON.parse(line) as { msg?: string; url?: string };
          if (entry.msg === 'gateway listening' && entry.url) resolve(entry.url);
        } catch {
          // not a log line
        }
      });
      child.once('exit', (code) => reject(new Error(`gateway exited early (${code}): ${stderr}`)));
    });

    let successes = 0;
    let billed = 0;
    let otherAnswers = 0;
    let sent = 0;
    let stopped = false;
    const loop = async (lane: number) => {
      for (let i = 0; !stopped; i++) {
        const points = 1 + ((lane * 7 + i) % 40);
        sent++;
        try {
          const res = await postJson(`${url}/v1/eos/evaluate`, key.token, body(points));
          if (res.status === 200) {
            successes++;
            billed += res.body.meta.points;
          } else otherAnswers++;
        } catch {
          return; // the gateway stopped listening
        }
      }
    };
    const lanes = Array.from({ length: 4 }, (_, lane) => loop(lane));
    while (successes < 40) await new Promise((r) => setTimeout(r, 10));
    child.kill('SIGTERM');
    const code = await exited;
    stopped = true;
    await Promise.all(lanes);
    assert.equal(code, 0, `clean exit after SIGTERM: ${stderr}`);
    assert.ok(successes >= 40, `successes ${successes}`);

    const usage = (await fx.usage(key.org.id)).get('/v1/eos/evaluate')!;
    assert.equal(usage.points, billed, `billed points = points of successful responses (${successes} successes, ${otherAnswers} other answers, ${sent} sent)`);
    assert.equal(usage.requests - usage.errors, successes, 'one successful usage record per successful response');
    assert.equal(usage.errors, otherAnswers, 'answered failures recorded as errors');
  });
});
