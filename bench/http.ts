/**
 * HTTP benchmark of the EOS API (issue 5). Each figure is a ratio to a baseline measured in the
 * same run on the same machine, with autocannon against gateways on loopback; it prints numbers
 * and asserts nothing.
 *
 *   1. single-point requests/s, full path (auth, rate limit, validation, metering, physics in the
 *      pool) vs a bare Express 5 route that parses the same JSON and returns a body of the same size;
 *   2. points/s for 1e5-point batches in the binary form vs in-process `evaluate` on one core;
 *   3. points/s for the same batches in JSON vs the batch echoed as JSON (parse + serialize, no
 *      physics);
 *   4. single-point requests/s with metering on vs off (meter replaced by a no-op).
 *
 * Single-point figures come twice: as requests/s, and as this process's CPU time per request
 * (autocannon runs in the same process, so it counts client and server, like the rate does). On a
 * shared machine other load moves requests/s by tens of percent from run to run; it moves CPU per
 * request far less, which is what a 5 % metering goal needs.
 *
 * It creates a throw-away database next to DATABASE_URL's (same cluster; the role needs CREATEDB),
 * migrates it, adds a plan without rate or quota limits, and drops it at the end.
 *
 * Run: with the project's PostgreSQL running (npm start, or any cluster of scripts/lib/postgres.ts):
 *   DATABASE_URL=postgres://…/fermiwell JWT_SECRET=<32+ chars> node --import tsx bench/http.ts [--method exact|table] [--seconds 5] [--rounds 4] [--points 100000]
 * (`--method table` also needs EOS_TABLE_PATH, the table file, e.g. .data/tables/<key>.h5)
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { parseArgs } from 'node:util';
import express from 'express';
import autocannon from 'autocannon';
import pg from 'pg';
import { loadConfig } from '../gateway/config.js';
import { createDb, migrateLatest } from '../gateway/db.js';
import { KeyService } from '../gateway/keys/service.js';
import { createApp } from '../gateway/app.js';
import { createLogger } from '../gateway/logger.js';
import { evaluate } from '../eos/index.js';
import { readTable } from '../eos-tables/table-file.js';

const { values: args } = parseArgs({
  options: {
    method: { type: 'string', default: 'exact' },
    seconds: { type: 'string', default: '5' },
    points: { type: 'string', default: '100000' },
    batches: { type: 'string', default: '4' },
    rounds: { type: 'string', default: '4' },
  },
});
const METHOD = args.method as 'exact' | 'table';
const SECONDS = Number(args.seconds);
const POINTS = Number(args.points);
const BATCHES = Number(args.batches);
const ROUNDS = Number(args.rounds);

const databaseUrl = process.env['DATABASE_URL'];
if (!databaseUrl) {
  console.error('DATABASE_URL is required (a database on the project cluster; the bench makes and drops its own next to it).');
  process.exit(1);
}

// ── a throw-away database with a plan that never limits ───────────────────────────────────────
const admin = new URL(databaseUrl);
admin.pathname = '/postgres';
const benchDb = `fermiwell_bench_${process.pid}`;
const benchUrl = new URL(databaseUrl);
benchUrl.pathname = `/${benchDb}`;
const adminClient = new pg.Client({ connectionString: admin.toString() });
await adminClient.connect();
await adminClient.query(`CREATE DATABASE ${benchDb}`);

const env = { ...process.env, DATABASE_URL: benchUrl.toString(), LOG_LEVEL: 'silent', HOST: '127.0.0.1', PORT: '0', NODE_ENV: 'test' };
const db = createDb(benchUrl.toString(), 4);
const gateways: Array<{ close(): Promise<void> }> = [];
const servers: http.Server[] = [];

try {
  await migrateLatest(db);
  await db('plans').insert({ id: 'bench', name: 'Bench', price_cents: 0, currency: 'usd', points_per_month: 1e15, requests_per_second: 1_000_000, max_batch: 5_000_000, table_builds_per_month: null, sort: 99 });
  const [user] = await db('users').insert({ email: `bench-${process.pid}@bench.invalid`, display_name: 'Bench', password_hash: '!' }).returning('id');
  const [org] = await db('organisations').insert({ name: 'Bench', slug: `bench-${process.pid}`, plan_id: 'bench' }).returning('id');
  await db('memberships').insert({ user_id: user.id, organisation_id: org.id, role: 'owner' });
  const keys = new KeyService(db);
  const { token } = await keys.create({ organisationId: org.id, name: 'bench', scopes: ['eos:evaluate'], createdBy: user.id });
  await keys.close();
  const auth = { authorization: `Bearer ${token}` };

  // one gateway: metering is switched off and on between runs, so the two figures differ in the
  // meter alone (not in two app instances' caches and compiled code)
  const full = await gatewayWithMeterSwitch();

  // ── 1 and 4: single point ─────────────────────────────────────────────────────────────────
  const single = JSON.stringify({ density: 1e6, temperature: 1e8, composition: { abar: 12, zbar: 6 }, method: METHOD });
  const sample = await fetch(`${full.url}/v1/eos/evaluate`, { method: 'POST', headers: { ...auth, 'content-type': 'application/json' }, body: single });
  if (sample.status !== 200) throw new Error(`single-point request failed: ${sample.status} ${await sample.text()}`);
  const singleAnswer = await sample.text();
  const bare = await listen(bareApp(singleAnswer));

  const jsonHeaders = { ...auth, 'content-type': 'application/json' };
  // Paired rounds: the machine may be shared and its load changes within seconds, so each ratio is
  // taken between runs made back to back in one round (the order rotates between rounds: the run
  // right after the bare route measured consistently slower, whichever app it was), and the figure
  // is the median over the rounds, with the range beside it.
  const singleRatios: number[] = [];
  const meteringCosts: number[] = [];
  const singleCpuRatios: number[] = [];
  const meteringCpuCosts: number[] = [];
  const runs = {
    bare: (round: number) => cannon(`[${round}] bare Express route (parse JSON, same-size answer)`, bare, '/bare', jsonHeaders, single),
    on: (round: number) => full.metered(true, () => cannon(`[${round}] EOS API, 1 point (auth + rate limit + validation + metering + physics)`, full.url, '/v1/eos/evaluate', jsonHeaders, single)),
    off: (round: number) => full.metered(false, () => cannon(`[${round}] EOS API, 1 point, metering off`, full.url, '/v1/eos/evaluate', jsonHeaders, single)),
  };
  const orders: Array<Array<keyof typeof runs>> = [['bare', 'on', 'off'], ['off', 'bare', 'on'], ['on', 'off', 'bare']];
  for (let round = 1; round <= ROUNDS; round++) {
    const got: Partial<Record<keyof typeof runs, Run>> = {};
    for (const name of orders[(round - 1) % orders.length]!) got[name] = await runs[name](round);
    singleRatios.push(got.on!.rate / got.bare!.rate);
    meteringCosts.push(1 - got.on!.rate / got.off!.rate);
    singleCpuRatios.push(got.bare!.cpu / got.on!.cpu);
    meteringCpuCosts.push(got.on!.cpu / got.off!.cpu - 1);
  }

  // ── 2 and 3: 1e5-point batches ────────────────────────────────────────────────────────────
  const density = new Float64Array(POINTS);
  const temperature = new Float64Array(POINTS);
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  for (let i = 0; i < POINTS; i++) {
    density[i] = 10 ** (-8 + 20 * rnd());
    temperature[i] = 10 ** (4 + 6 * rnd());
  }
  const fields = ['pressure', 'specificEnergy', 'specificEntropy', 'gamma1', 'soundSpeed'];
  // the table method in process needs the same table file the gateway uses (EOS_TABLE_PATH)
  const tablePath = process.env['EOS_TABLE_PATH'];
  if (METHOD === 'table' && !tablePath) throw new Error('--method table needs EOS_TABLE_PATH (the table file the gateway uses)');
  const table = METHOD === 'table' ? await readTable(tablePath!) : undefined;
  evaluate({ density, temperature, abar: 12, zbar: 6 }, { method: METHOD, ...(table ? { table } : {}) }); // warm-up
  let t = performance.now();
  evaluate({ density, temperature, abar: 12, zbar: 6 }, { method: METHOD, ...(table ? { table } : {}) });
  const inProcess = POINTS / ((performance.now() - t) / 1000);
  console.log(`in-process evaluate (${METHOD}, one core, main thread): ${fmt(inProcess)} points/s`);

  const binaryBody = Buffer.concat([Buffer.from(density.buffer), Buffer.from(temperature.buffer)]);
  const binaryPath = `/v1/eos/evaluate?inputs=density,temperature&abar=12&zbar=6&method=${METHOD}&fields=${fields.join(',')}`;
  const binary = await cannonBatches('EOS API binary batches', full.url, binaryPath, { ...auth, 'content-type': 'application/octet-stream' }, binaryBody);

  const jsonBody = JSON.stringify({ density: Array.from(density), temperature: Array.from(temperature), composition: { abar: 12, zbar: 6 }, method: METHOD, fields });
  const json = await cannonBatches('EOS API JSON batches', full.url, '/v1/eos/evaluate', jsonHeaders, jsonBody);
  const echo = await cannonBatches('JSON echo (parse + serialize, no physics)', bare, '/echo', jsonHeaders, jsonBody);

  console.log('\nResults (ratios to baselines measured in this run)');
  console.log(`  single point:        ${pct(median(singleRatios))} of the bare route (rounds: ${singleRatios.map(pct).join(', ')}) (goal ≥ 60 %)`);
  console.log(`    by CPU per request: ${pct(median(singleCpuRatios))} (rounds: ${singleCpuRatios.map(pct).join(', ')})`);
  console.log(`  binary 1e5 batches:  ${fmt(binary)} points/s vs in-process ${METHOD} evaluate ${fmt(inProcess)} points/s → ${pct(binary / inProcess)} (goal ≥ 50 %)`);
  console.log(`  JSON 1e5 batches:    ${fmt(json)} points/s vs JSON echo ${fmt(echo)} points/s → ${pct(json / echo)} (goal ≥ 80 %)`);
  console.log(`  metering cost:       ${pct(median(meteringCosts))} slower with metering on (rounds: ${meteringCosts.map(pct).join(', ')}) (goal ≤ 5 %)`);
  console.log(`    by CPU per request: ${pct(median(meteringCpuCosts))} more with metering on (rounds: ${meteringCpuCosts.map(pct).join(', ')})`);
} finally {
  for (const g of gateways) await g.close().catch(() => undefined);
  for (const s of servers) await new Promise((r) => s.close(r));
  await db.destroy();
  await adminClient.query(`DROP DATABASE IF EXISTS ${benchDb} WITH (FORCE)`);
  await adminClient.end();
}

// ── helpers ─────────────────────────────────────────────────────────────────────────────────

function fmt(x: number): string {
  return x >= 100 ? Math.round(x).toLocaleString('en-US') : x.toFixed(1);
}

function median(xs: number[]): number {
  const sorted = [...xs].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2;
}

function pct(x: number): string {
  return `${(100 * x).toFixed(0)} %`;
}

async function listen(app: express.Express): Promise<string> {
  const server = http.createServer(app);
  server.keepAliveTimeout = 5_000;
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  servers.push(server);
  return `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}

/** Parses the JSON and answers a body of the given size; /echo serializes the parsed batch back. */
function bareApp(answer: string): express.Express {
  const app = express();
  app.set('etag', false);
  app.use(express.json({ limit: '100mb' }));
  app.post('/bare', (req, res) => {
    if (typeof req.body !== 'object') res.status(400).end();
    else res.type('application/json').send(answer);
  });
  app.post('/echo', (req, res) => {
    const values: Record<string, unknown> = {};
    for (const f of req.body.fields as string[]) values[f] = req.body.density;
    res.type('application/json').send(JSON.stringify({ values, status: new Array(req.body.density.length).fill(0) }));
  });
  return app;
}

/** The gateway's own app, whose meter can be replaced by a no-op (metering off) and restored. */
async function gatewayWithMeterSwitch(): Promise<{ url: string; metered<T>(on: boolean, run: () => Promise<T>): Promise<T> }> {
  const config = loadConfig(env);
  const appDb = createDb(config.DATABASE_URL, 4);
  const { app, services } = await createApp({ config, db: appDb, logger: createLogger('silent') });
  gateways.push({ close: async () => { await services.close(); await appDb.destroy(); } });
  const url = await listen(app);
  const meter = services.meter;
  const metered = { admit: meter.admit, recordRejected: meter.recordRejected };
  const noTicket = { succeed() {}, fail() {} };
  return {
    url,
    /** Runs `run` with metering on or off; metering is on again afterwards. */
    async metered<T>(on: boolean, run: () => Promise<T>): Promise<T> {
      meter.admit = on ? metered.admit : () => noTicket;
      meter.recordRejected = on ? metered.recordRejected : () => {};
      try {
        return await run();
      } finally {
        meter.admit = metered.admit;
        meter.recordRejected = metered.recordRejected;
      }
    },
  };
}

/** A single-point run: requests per second, and this process's CPU time per request (µs). */
interface Run {
  rate: number;
  cpu: number;
}

async function cannon(title: string, url: string, path: string, headers: Record<string, string>, body: string): Promise<Run> {
  // warm-up, then the measured run
  await autocannon({ url: url + path, method: 'POST', headers, body, connections: 10, duration: 1 });
  const before = process.cpuUsage();
  const result = await autocannon({ url: url + path, method: 'POST', headers, body, connections: 10, duration: SECONDS });
  const used = process.cpuUsage(before);
  const ok = result.requests.total - result.non2xx;
  const rate = ok / result.duration;
  // client and server share this process: CPU per request counts both, and not the time the
  // machine gave to others (a shared machine's load moves req/s far more than CPU per request)
  const cpu = (used.user + used.system) / Math.max(1, result.requests.total);
  console.log(`${title}: ${fmt(rate)} req/s, ${cpu.toFixed(0)} µs CPU per request (p50 ${result.latency.p50} ms, p99 ${result.latency.p99} ms, non-2xx ${result.non2xx}, errors ${result.errors})`);
  return { rate, cpu };
}

async function cannonBatches(title: string, url: string, path: string, headers: Record<string, string>, body: string | Buffer): Promise<number> {
  await autocannon({ url: url + path, method: 'POST', headers, body, connections: 2, amount: 2, timeout: 600 });
  const started = performance.now();
  const result = await autocannon({ url: url + path, method: 'POST', headers, body, connections: 2, amount: BATCHES, timeout: 600 });
  const seconds = (performance.now() - started) / 1000;
  const ok = result.requests.total - result.non2xx;
  const rate = (ok * POINTS) / seconds;
  console.log(`${title}: ${fmt(rate)} points/s (${ok}/${BATCHES} batches of ${POINTS} in ${seconds.toFixed(1)} s, ${(result.throughput.total / 1e6).toFixed(0)} MB answered)`);
  return rate;
}
