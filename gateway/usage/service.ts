/**
 * The usage series of an organisation (GET /v1/usage and the GraphQL `usage` field): requests,
 * points, errors and latency percentiles per time bucket, optionally per key or endpoint, plus the
 * current period's quota. Who may read it is decided before: an API key with `usage:read` reads its
 * own organisation's usage; a signed-in member reads it when the role matrix allows `usage.read`
 * (every role does). REST and GraphQL call `read` with the same arguments and get the same answer.
 */
import type { Knex } from 'knex';
import { ProblemError } from '../shared/problem.js';
import { quantileMs } from './latency-buckets.js';
import { nextPeriod, periodStart } from './meter.js';
import { GRANULARITIES, GROUP_BYS, organisationPlan, pointsUsed, usageSeries, type Granularity, type GroupBy } from './store.js';

/** Longest series asked in one request: buckets (per group) between from and to. */
export const MAX_BUCKETS = 10_000;
const BUCKET_MS: Record<Granularity, number> = { minute: 60_000, hour: 3_600_000, day: 86_400_000 };

export interface UsageQuery {
  from?: string | undefined;
  to?: string | undefined;
  granularity?: string | undefined;
  groupBy?: string | undefined;
}

export interface UsageBucket {
  /** Bucket start, ISO 8601 UTC. */
  start: string;
  /** null when groupBy is none; the key id ('' for requests made without a key) or the endpoint. */
  group: string | null;
  requests: number;
  points: number;
  errors: number;
  /** Upper bound (ms) of the latency bucket holding the quantile; null when nothing was timed or above 10 000 ms. */
  latencyP50Ms: number | null;
  latencyP90Ms: number | null;
  latencyP99Ms: number | null;
}

export interface UsageQuota {
  plan: string;
  pointsUsed: number;
  pointsQuota: number;
  pointsLeft: number;
  periodStart: string;
  periodEnd: string;
}

export interface UsageAnswer {
  organisationId: string;
  from: string;
  to: string;
  granularity: Granularity;
  groupBy: GroupBy;
  buckets: UsageBucket[];
  quota: UsageQuota;
}

function percentile(counts: readonly number[], q: number): number | null {
  const v = quantileMs(counts, q);
  return v === null || !Number.isFinite(v) ? null : v;
}

function invalid(detail: string, field: string): ProblemError {
  return new ProblemError('invalid-request', 400, 'Invalid request', detail, { errors: [{ path: field, message: detail }] });
}

/** An ISO 8601 date (UTC midnight) or date-time with offset. */
function parseInstant(value: string, field: string): Date {
  const ok = /^\d{4}-\d{2}-\d{2}$/.test(value) || /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/.test(value);
  const date = new Date(/^\d{4}-\d{2}-\d{2}$/.test(value) ? `${value}T00:00:00Z` : value);
  if (!ok || Number.isNaN(date.getTime())) throw invalid(`${field} must be an ISO 8601 date (2026-12-01) or date-time with offset (2026-12-01T00:00:00Z); got "${value}".`, field);
  return date;
}

export class UsageService {
  constructor(private readonly db: Knex) {}

  /** The organisation's usage; the caller has been allowed to read it. */
  async read(organisationId: string, query: UsageQuery, now = Date.now()): Promise<UsageAnswer> {
    const granularity = (query.granularity ?? 'day') as Granularity;
    if (!GRANULARITIES.includes(granularity)) throw invalid(`granularity must be one of ${GRANULARITIES.join(', ')}.`, 'granularity');
    const groupBy = (query.groupBy ?? 'none') as GroupBy;
    if (!GROUP_BYS.includes(groupBy)) throw invalid(`groupBy must be one of ${GROUP_BYS.join(', ')}.`, 'groupBy');
    const start = periodStart(now);
    const end = nextPeriod(start);
    const from = query.from !== undefined ? parseInstant(query.from, 'from') : new Date(start);
    const to = query.to !== undefined ? parseInstant(query.to, 'to') : new Date(end);
    if (!(from < to)) throw invalid('from must be before to (the range is [from, to)).', 'from');
    const buckets = Math.ceil((to.getTime() - from.getTime()) / BUCKET_MS[granularity]);
    if (buckets > MAX_BUCKETS) {
      throw invalid(`The range holds ${buckets} ${granularity} buckets; at most ${MAX_BUCKETS} per request. Use a coarser granularity or a shorter range.`, 'granularity');
    }
    const [rows, plan, used] = await Promise.all([
      usageSeries(this.db, organisationId, from, to, granularity, groupBy),
      organisationPlan(this.db, organisationId),
      pointsUsed(this.db, organisationId, new Date(start), new Date(end)),
    ]);
    if (!plan) throw new ProblemError('organisation-not-found', 404, 'Organisation not found', `There is no organisation ${organisationId}.`);
    return {
      organisationId,
      from: from.toISOString(),
      to: to.toISOString(),
      granularity,
      groupBy,
      buckets: rows.map((r) => ({
        start: r.start.toISOString(),
        group: groupBy === 'none' ? null : r.group,
        requests: r.requests,
        points: r.points,
        errors: r.errors,
        latencyP50Ms: percentile(r.latencyBuckets, 0.5),
        latencyP90Ms: percentile(r.latencyBuckets, 0.9),
        latencyP99Ms: percentile(r.latencyBuckets, 0.99),
      })),
      quota: {
        plan: plan.plan,
        pointsUsed: used,
        pointsQuota: plan.pointsPerMonth,
        pointsLeft: Math.max(0, plan.pointsPerMonth - used),
        periodStart: new Date(start).toISOString(),
        periodEnd: new Date(end).toISOString(),
      },
    };
  }
}

export const CSV_COLUMNS = ['start', 'group', 'requests', 'points', 'errors', 'latencyP50Ms', 'latencyP90Ms', 'latencyP99Ms'] as const;

/** The buckets as CSV (RFC 4180, header row, CRLF); empty cells for nulls. */
export function usageCsv(answer: UsageAnswer): string {
  const cell = (v: unknown) => {
    if (v === null || v === undefined) return '';
    const s = String(v);
    return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  const lines = [CSV_COLUMNS.join(',')];
  for (const b of answer.buckets) lines.push(CSV_COLUMNS.map((c) => cell(b[c])).join(','));
  return lines.join('\r\n') + '\r\n';
}
