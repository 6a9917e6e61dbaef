/**
 * Load against one API key with autocannon on loopback, and the server's own accounting of it:
 * - the rate limit: the shared rate-limit rows (`rate_limit_windows`, one per key and one-second
 *   window, written by gateway/usage/rate-limit-store.ts) hold the hits each window saw; in every
 *   window the first `limit` hits are served and the rest refused, so over the run
 *   served = Σ min(hits, limit) and refused = Σ max(0, hits − limit), exactly;
 * - metering: after the meter's flush, usage_minutes of the key holds every request sent
 *   (refused ones as errors) and the points of exactly the served ones.
 * Used by tests/reliability/load-*.test.ts at a small size and by `npm run soak` at full size.
 */
import autocannon from 'autocannon';
import type { Knex } from 'knex';
import { FLUSH_INTERVAL_MS } from '../../gateway/usage/meter.js';

/** The parts of autocannon's API used here beyond bench/autocannon.d.ts (the package ships no types). */
interface RateOptions {
  url: string;
  method: string;
  headers: Record<string, string>;
  body: string;
  connections: number;
  /** requests per second over all connections */
  overallRate: number;
  /** stop after this many answers (so every request sent is answered) */
  amount: number;
  timeout: number;
}
interface RateResult {
  statusCodeStats: Record<string, { count: number }>;
  errors: number;
  timeouts: number;
}
interface RateInstance extends Promise<RateResult> {
  on(event: 'response', listener: (client: unknown, statusCode: number, resBytes: number, responseTime: number) => void): this;
}
const cannon = autocannon as unknown as (options: RateOptions) => RateInstance;

export interface LoadRun {
  sent: number;
  status: Record<string, number>;
  errors: number;
  timeouts: number;
  durationSeconds: number;
  /** served (200) and refused (429) per second of the client's clock, for the figures */
  perSecond: Array<{ second: number; ok: number; limited: number }>;
}

export interface Accounting {
  windows: Array<{ start: number; hits: number }>;
  hits: number;
  expectedServed: number;
  expectedRefused: number;
  usage: { requests: number; points: number; errors: number };
}

export const evaluationBody = (points: number) =>
  JSON.stringify({ density: new Array(points).fill(1e6), temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure'] });

/** Waits until just after the start of a one-second window of the wall clock. */
export async function startOfSecond(): Promise<void> {
  await new Promise((r) => setTimeout(r, 1000 - (Date.now() % 1000) + 20));
}

/** Sends exactly `amount` evaluations of `points` points at `rate` requests per second; waits for every answer. */
export async function runLoad(options: { url: string; token: string; rate: number; amount: number; points?: number; connections?: number }): Promise<LoadRun> {
  const started = Date.now();
  const perSecond = new Map<number, { ok: number; limited: number }>();
  const instance = cannon({
    url: `${options.url}/v1/eos/evaluate`,
    method: 'POST',
    headers: { authorization: `Bearer ${options.token}`, 'content-type': 'application/json' },
    body: evaluationBody(options.points ?? 1),
    connections: options.connections ?? 10,
    overallRate: options.rate,
    amount: options.amount,
    timeout: 30,
  });
  instance.on('response', (_client, statusCode) => {
    const second = Math.floor(Date.now() / 1000);
    const cell = perSecond.get(second) ?? { ok: 0, limited: 0 };
    if (statusCode === 200) cell.ok += 1;
    else if (statusCode === 429) cell.limited += 1;
    perSecond.set(second, cell);
  });
  const result = await instance;
  const status: Record<string, number> = {};
  for (const [code, { count }] of Object.entries(result.statusCodeStats)) status[code] = count;
  return {
    sent: options.amount,
    status,
    errors: result.errors,
    timeouts: result.timeouts,
    durationSeconds: (Date.now() - started) / 1000,
    perSecond: [...perSecond.entries()].sort((a, b) => a[0] - b[0]).map(([second, c]) => ({ second, ...c })),
  };
}

async function usageOfKey(db: Knex, keyId: string) {
  const row = await db('usage_minutes').where('api_key_id', keyId).sum({ requests: 'requests', points: 'points', errors: 'errors' }).first();
  return { requests: Number(row?.requests ?? 0), points: Number(row?.points ?? 0), errors: Number(row?.errors ?? 0) };
}

/**
 * The server's record of a key's load: waits (bounded) until the rate-limit rows and usage rows
 * account for `sent` requests, then one more flush interval so a late duplicate would show.
 */
export async function accountingOf(db: Knex, keyId: string, limit: number, sent: number, waitMs = 15_000): Promise<Accounting> {
  const deadline = Date.now() + waitMs;
  const read = async () => {
    const rows: Array<{ window_start_ms: string; hits: number }> = await db('rate_limit_windows').where('key', `rl:${keyId}`).select('window_start_ms', 'hits');
    const windows = rows.map((r) => ({ start: Number(r.window_start_ms), hits: Number(r.hits) })).sort((a, b) => a.start - b.start);
    const hits = windows.reduce((s, w) => s + w.hits, 0);
    return { windows, hits, usage: await usageOfKey(db, keyId) };
  };
  let now = await read();
  while ((now.hits < sent || now.usage.requests < sent) && Date.now() < deadline) {
    await new Promise((r) => setTimeout(r, 100));
    now = await read();
  }
  await new Promise((r) => setTimeout(r, FLUSH_INTERVAL_MS + 300));
  now = await read();
  return {
    ...now,
    expectedServed: now.windows.reduce((s, w) => s + Math.min(w.hits, limit), 0),
    expectedRefused: now.windows.reduce((s, w) => s + Math.max(0, w.hits - limit), 0),
  };
}

/** One line of figures for the README and the soak run. */
export function describeRun(plan: string, limit: number, rate: number, run: LoadRun, acc: Accounting): string {
  const ok = run.status['200'] ?? 0;
  const limited = run.status['429'] ?? 0;
  const full = run.perSecond.slice(1, -1);
  const okPerFullSecond = full.length ? `${Math.min(...full.map((s) => s.ok))}–${Math.max(...full.map((s) => s.ok))}` : 'n/a';
  return `${plan} (limit ${limit}/s): sent ${run.sent} at ${rate}/s in ${run.durationSeconds.toFixed(1)} s → 200: ${ok}, 429: ${limited}, other: ${run.sent - ok - limited}, socket errors ${run.errors}; server windows ${acc.windows.length}, hits ${acc.hits}, served per window ≤ ${limit} (Σmin = ${acc.expectedServed}); 200s per full client second ${okPerFullSecond}; usage rows: requests ${acc.usage.requests}, errors ${acc.usage.errors}, points ${acc.usage.points}`;
}

/**
 * The full-size load run of `npm run soak`: a gateway process, one key per plan, each loaded at
 * three times its limit (FW_SOAK_LOAD_SECONDS, default 10 s each; Facility at most
 * FW_SOAK_MAX_RATE, default 3000/s). Prints one line of figures per plan; true when every goal held
 * (only 200/429, served and refused exactly as the server's windows say, usage exact).
 */
export async function soakLoad(log: (line: string) => void): Promise<boolean> {
  const { Fixtures } = await import('../support/fixtures.js');
  const { startGatewayProcess } = await import('./support/gateway-process.js');
  const seconds = Number(process.env['FW_SOAK_LOAD_SECONDS'] ?? 10);
  const maxRate = Number(process.env['FW_SOAK_MAX_RATE'] ?? 3_000);
  const gateway = await startGatewayProcess({ JOBS_IN_PROCESS_WORKER: 'false' });
  const fx = new Fixtures();
  let ok = true;
  try {
    for (const [plan, limit] of [['free', 10], ['group', 100], ['facility', 1_000]] as const) {
      const key = await fx.keyOnPlan(plan);
      const rate = Math.min(3 * limit, maxRate);
      await startOfSecond();
      const run = await runLoad({ url: gateway.url, token: key.token, rate, amount: rate * seconds, points: 1, connections: Math.min(100, Math.max(10, rate / 20)) });
      const acc = await accountingOf(fx.db, key.id, limit, run.sent, 60_000);
      const served = run.status['200'] ?? 0;
      const refused = run.status['429'] ?? 0;
      const checks = {
        'only 200 and 429': served + refused === run.sent && run.errors === 0,
        'every request in the rate-limit rows': acc.hits === run.sent,
        'served = Σ min(hits, limit)': served === acc.expectedServed,
        'refused = Σ max(0, hits − limit)': refused === acc.expectedRefused,
        'usage requests = sent': acc.usage.requests === run.sent,
        'usage points = served points': acc.usage.points === served,
        'usage errors = refused': acc.usage.errors === refused,
      };
      const achieved = (run.sent / run.durationSeconds).toFixed(0);
      log(describeRun(plan, limit, rate, run, acc) + ` (achieved ${achieved}/s)`);
      if (acc.windows.every((w) => w.hits <= limit)) log(`  ${plan}: the load never passed ${limit} requests in one server window on this machine — the limit itself was not reached`);
      for (const [name, held] of Object.entries(checks)) if (!held) log(`  MISSED ${plan}: ${name}`);
      ok &&= Object.values(checks).every(Boolean);
    }
  } finally {
    await gateway.stop();
    await fx.close();
  }
  return ok;
}
