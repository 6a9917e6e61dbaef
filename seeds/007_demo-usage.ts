/**
 * Sixty days of invented usage for the demo group's two keys (DESIGN.md §8), so Usage and
 * Overview have something to show: one row per key, endpoint and hour (at hh:00 of
 * `usage_minutes`, the per-minute table the meter writes) rather than one per minute.
 *
 * - "detonation-runs (cluster)" runs table evaluations and inversions in large batches around the
 *   clock, more on weekdays; "analysis notebook" makes small exact evaluations and regime maps in
 *   working hours (UTC) on weekdays.
 * - Volume follows the organisation's quota when seeded: a month at this pace uses about 60 % of
 *   it (a little more by the end, as use grows), so the demo key keeps working and the quota line means something whatever the plan.
 * - About 1 % of requests fail (no points); the notebook had a bad working day on the last weekday
 *   at least two days before seeding (most of its requests refused from 09:00 to 18:00 UTC), which
 *   the Overview reports as a failing key for the week after.
 * - Latency per request: a fixed overhead plus a per-point cost for the method, with log-normal
 *   spread, counted into the buckets of gateway/usage/latency-buckets.ts.
 *
 * The keys' `last_used_at` is moved up to their latest seeded hour (never back).
 *
 * Idempotent: every value is a pure function of (key, endpoint, hour) and the bad day, rows are
 * inserted with ON CONFLICT DO NOTHING (real metered rows are never touched), and a later start
 * only fills the hours since. All of it is invented.
 */
import type { Knex } from 'knex';
import { DEMO_KEYS, DEMO_ORGANISATION } from './demo-accounts.js';
import { LATENCY_BOUNDS_MS, bucketOf } from '../gateway/usage/latency-buckets.js';

export const DEMO_USAGE_DAYS = 60;
/** A month at the seeded pace uses this share of the quota. */
export const MONTHLY_SHARE = 0.6;
const HOUR_MS = 3_600_000;

interface Profile {
  keyId: string;
  endpoint: string;
  /** share of the organisation's points */
  share: number;
  /** typical points per request, as a fraction of the plan's largest batch (capped by `maxPoints`) */
  batchFraction: number;
  maxPoints: number;
  /** hours (UTC) of activity and their weight, weekdays and weekends */
  weekday: (hour: number) => number;
  weekend: (hour: number) => number;
  /** ms per request and per point (the method's cost), and the spread of the log-normal */
  overheadMs: number;
  perPointMs: number;
  sigma: number;
  errorRate: number;
}

const aroundTheClock = (h: number) => 0.6 + 0.4 * Math.sin(((h - 6) / 24) * 2 * Math.PI) ** 2;
const workingHours = (h: number) => (h >= 8 && h < 19 ? (h === 12 ? 0.5 : 1) : 0);

function profiles(): Profile[] {
  const [cluster, notebook] = DEMO_KEYS;
  return [
    { keyId: cluster.id, endpoint: '/v1/eos/evaluate', share: 0.62, batchFraction: 0.25, maxPoints: 250_000, weekday: aroundTheClock, weekend: (h) => 0.5 * aroundTheClock(h), overheadMs: 4, perPointMs: 0.0016, sigma: 0.3, errorRate: 0.006 },
    { keyId: cluster.id, endpoint: '/v1/eos/invert', share: 0.26, batchFraction: 0.1, maxPoints: 100_000, weekday: aroundTheClock, weekend: (h) => 0.5 * aroundTheClock(h), overheadMs: 5, perPointMs: 0.006, sigma: 0.35, errorRate: 0.012 },
    { keyId: notebook.id, endpoint: '/v1/eos/evaluate', share: 0.07, batchFraction: 0.02, maxPoints: 400, weekday: workingHours, weekend: () => 0, overheadMs: 6, perPointMs: 0.045, sigma: 0.45, errorRate: 0.015 },
    { keyId: notebook.id, endpoint: '/v1/eos/regime', share: 0.05, batchFraction: 1, maxPoints: 1_920, weekday: workingHours, weekend: () => 0, overheadMs: 8, perPointMs: 0.03, sigma: 0.3, errorRate: 0.01 },
  ];
}

/** FNV-1a of a string: the seed of one (key, endpoint, hour) cell. */
function hash(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

/** mulberry32: a small, well-mixed 32-bit generator (common practice for reproducible noise). */
function generator(seed: number): () => number {
  let a = seed;
  return () => {
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

/** A standard normal from two uniforms (Box–Muller). */
function normal(random: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
}

/** The day number (days since 1970-01-01, UTC) of the last Monday–Friday at or before `time`. */
function lastWeekdayBefore(time: number): number {
  let day = Math.floor(time / 86_400_000);
  while ([0, 6].includes(new Date(day * 86_400_000).getUTCDay())) day--;
  return day;
}

export interface DemoUsageRow {
  organisation_id: string;
  api_key_id: string;
  endpoint: string;
  minute: Date;
  requests: number;
  points: number;
  errors: number;
  latency_ms_sum: number;
  latency_buckets: number[];
}

/** The rows of [from, to) (whole hours) for an organisation with this quota and largest batch. */
export function demoUsageRows(organisationId: string, quota: number, maxBatch: number, from: number, to: number): DemoUsageRow[] {
  const rows: DemoUsageRow[] = [];
  const dailyPoints = (MONTHLY_SHARE * quota) / 30;
  const badDay = lastWeekdayBefore(to - 2 * 86_400_000);
  for (const p of profiles()) {
    // the profile's weights over a week, so a day's points come out right on average
    let weekWeight = 0;
    for (let d = 0; d < 7; d++) for (let h = 0; h < 24; h++) weekWeight += d < 5 ? p.weekday(h) : p.weekend(h);
    const perWeightPoints = (dailyPoints * 7 * p.share) / weekWeight;
    const batch = Math.max(1, Math.min(p.maxPoints, Math.round(maxBatch * p.batchFraction)));
    for (let t = from; t < to; t += HOUR_MS) {
      const date = new Date(t);
      const dow = (date.getUTCDay() + 6) % 7; // Monday = 0
      const hour = date.getUTCHours();
      const weight = dow < 5 ? p.weekday(hour) : p.weekend(hour);
      if (weight === 0) continue;
      const random = generator(hash(`${organisationId}|${p.keyId}|${p.endpoint}|${t}`));
      // a slow rise over the sixty days, and day-to-day noise
      const growth = 0.8 + 0.4 * Math.min(1, Math.max(0, (t - (to - DEMO_USAGE_DAYS * 86_400_000)) / (DEMO_USAGE_DAYS * 86_400_000)));
      const expected = perWeightPoints * weight * growth * Math.exp(0.35 * normal(random));
      const succeeded = Math.round(expected / batch);
      const bad = p.keyId === DEMO_KEYS[1].id && Math.floor(t / 86_400_000) === badDay && hour >= 9 && hour < 18;
      let errors = 0;
      for (let i = 0; i < succeeded; i++) if (random() < (bad ? 0.6 : p.errorRate)) errors++;
      if (bad) errors += 3;
      const requests = succeeded + errors;
      if (requests === 0) continue;
      const buckets = new Array<number>(LATENCY_BOUNDS_MS.length).fill(0);
      let latencySum = 0;
      let points = 0;
      for (let i = 0; i < requests; i++) {
        const failed = i >= succeeded;
        const n = failed ? 0 : Math.max(1, Math.round(batch * Math.exp(0.25 * normal(random))));
        points += n;
        const ms = failed ? 1 + 3 * random() : (p.overheadMs + p.perPointMs * n) * Math.exp(p.sigma * normal(random));
        latencySum += ms;
        buckets[bucketOf(ms)]! += 1;
      }
      rows.push({
        organisation_id: organisationId,
        api_key_id: p.keyId,
        endpoint: p.endpoint,
        minute: date,
        requests,
        points,
        errors,
        latency_ms_sum: Math.round(latencySum * 1000) / 1000,
        latency_buckets: buckets,
      });
    }
  }
  return rows;
}

export async function seed(knex: Knex) {
  const org = await knex('organisations as o')
    .join('plans as p', 'p.id', 'o.plan_id')
    .leftJoin('organisation_limit_overrides as x', 'x.organisation_id', 'o.id')
    .where('o.slug', DEMO_ORGANISATION.slug)
    .first('o.id', knex.raw('COALESCE(x.points_per_month, p.points_per_month) AS quota'), knex.raw('COALESCE(x.max_batch, p.max_batch) AS max_batch'));
  if (!org) return;
  const keys = await knex('api_keys').whereIn('id', DEMO_KEYS.map((k) => k.id)).andWhere('organisation_id', org.id).pluck('id');
  if (keys.length !== DEMO_KEYS.length) return;
  const to = Math.floor(Date.now() / HOUR_MS) * HOUR_MS;
  const from = to - DEMO_USAGE_DAYS * 24 * HOUR_MS;
  const rows = demoUsageRows(org.id, Number(org.quota), Number(org.max_batch), from, to);
  for (let i = 0; i < rows.length; i += 500) {
    await knex('usage_minutes')
      .insert(rows.slice(i, i + 500))
      .onConflict(['organisation_id', 'api_key_id', 'endpoint', 'minute'])
      .ignore();
  }
  // each key's "last used" follows its seeded use (the Keys page said "Never"); real use moves it on
  for (const keyId of keys) {
    const last = await knex('usage_minutes').where({ organisation_id: org.id, api_key_id: keyId }).max('minute as at').first();
    if (!last?.at) continue;
    await knex('api_keys')
      .where({ id: keyId })
      .andWhere((q) => q.whereNull('last_used_at').orWhere('last_used_at', '<', last.at))
      .update({ last_used_at: last.at });
  }
}
