/**
 * The Operator page's rules (operator role only, shared/roles.ts):
 * - every organisation with its plan, effective limits, the operator's override (if any) and its
 *   usage this period (`organisations.list-all`);
 * - changing an organisation's limits (`plans.manage`): move it to another plan and/or override
 *   any of points per month, requests per second, largest batch and table builds per month. An
 *   override is an operator's decision outside billing (a pilot, a workshop, a cap on a runaway
 *   key), so a reason is required; the change, before and after, goes to the organisation's audit
 *   log as `plan.changed` in the same transaction. Limits apply at once on this instance (the API
 *   key cache is dropped for the organisation) and within the key cache's lifetime elsewhere;
 * - service health (`platform.health`): the /readyz checks and this instance's key metrics.
 * REST (routes.ts) and GraphQL (resolvers.ts) call the same methods.
 */
import type { Services } from '../services.js';
import type { Actor } from '../organisations/access.js';
import { organisationNotFound } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import { isUuid } from '../shared/validate.js';
import { nextPeriod, periodStart } from '../usage/meter.js';
import { readiness, type Readiness } from '../health/routes.js';
import * as store from './store.js';

/** Requests and errors in this window count as "recent" (failing organisations). */
export const RECENT_WINDOW_MS = 24 * 3_600_000;

/** Upper bounds an override may take: generous, but no typo turns into an unlimited account. */
export const OVERRIDE_BOUNDS = {
  pointsPerMonth: 1_000_000_000_000,
  requestsPerSecond: 100_000,
  tableBuildsPerMonth: 10_000,
} as const;

export interface Limits {
  pointsPerMonth: number;
  requestsPerSecond: number;
  maxBatch: number;
  /** null = unlimited */
  tableBuildsPerMonth: number | null;
}

export interface LimitOverride {
  /** null = the plan's value */
  pointsPerMonth: number | null;
  requestsPerSecond: number | null;
  maxBatch: number | null;
  /** null = the plan's value; 'unlimited' = no limit whatever the plan */
  tableBuildsPerMonth: number | 'unlimited' | null;
  reason: string;
  setBy: { id: string | null; email: string | null };
  updatedAt: string;
}

export interface OperatorOrganisation {
  id: string;
  name: string;
  slug: string;
  createdAt: string;
  plan: string;
  planName: string;
  memberCount: number;
  activeKeyCount: number;
  /** What applies now: the plan's limits under the override. */
  limits: Limits;
  planLimits: Limits;
  override: LimitOverride | null;
  usage: {
    periodStart: string;
    periodEnd: string;
    points: number;
    requests: number;
    errors: number;
    /** points / pointsPerMonth (effective), 0…∞ */
    quotaFraction: number;
    recentRequests: number;
    recentErrors: number;
  };
}

export interface LimitsChange {
  /** Move to this plan; omitted = keep the plan. */
  plan?: string | undefined;
  /** The overrides to hold afterwards (each null = the plan's value); omitted = keep the current ones. */
  overrides?:
    | {
        pointsPerMonth: number | null;
        requestsPerSecond: number | null;
        maxBatch: number | null;
        tableBuildsPerMonth: number | 'unlimited' | null;
      }
    | undefined;
  reason: string;
}

export interface MetricSample {
  name: string;
  labels: Record<string, string>;
  value: number;
}

export interface OperatorHealth {
  checkedAt: string;
  readiness: Readiness;
  instance: {
    uptimeSeconds: number;
    residentMemoryBytes: number | null;
    eventLoopLagP99Seconds: number | null;
    httpRequests: number;
    httpServerErrors: number;
    httpMeanSeconds: number | null;
    pointsEvaluated: number;
    poolThreads: number | null;
    poolQueueDepth: number | null;
    poolUtilization: number | null;
    dbConnectionsUsed: number | null;
    dbConnectionsFree: number | null;
    dbConnectionsPending: number | null;
    meteringFlushLagSeconds: number | null;
  };
  platform: { organisations: number; users: number; activeKeys: number; pointsThisPeriod: number; requestsThisPeriod: number; errorsThisPeriod: number; periodStart: string };
}

const num = (v: unknown) => Number(v ?? 0);
const nullableNum = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function invalid(field: string, detail: string): ProblemError {
  return new ProblemError('invalid-request', 400, 'Invalid request', `${field}: ${detail}`, { errors: [{ field, message: detail }] });
}

function toView(row: store.OperatorOrganisationRow, period: { start: Date; end: Date }): OperatorOrganisation {
  const limits: Limits = {
    pointsPerMonth: num(row.points_per_month),
    requestsPerSecond: num(row.requests_per_second),
    maxBatch: num(row.max_batch),
    tableBuildsPerMonth: nullableNum(row.table_builds_per_month),
  };
  const o = row.override;
  const points = num(row.period_points);
  return {
    id: row.id,
    name: row.name,
    slug: row.slug,
    createdAt: new Date(row.created_at).toISOString(),
    plan: row.plan_id,
    planName: row.plan_name,
    memberCount: num(row.member_count),
    activeKeyCount: num(row.key_count),
    limits,
    planLimits: {
      pointsPerMonth: num(row.plan_points_per_month),
      requestsPerSecond: num(row.plan_requests_per_second),
      maxBatch: num(row.plan_max_batch),
      tableBuildsPerMonth: nullableNum(row.plan_table_builds_per_month),
    },
    override: o
      ? {
          pointsPerMonth: nullableNum(o.points_per_month),
          requestsPerSecond: nullableNum(o.requests_per_second),
          maxBatch: nullableNum(o.max_batch),
          tableBuildsPerMonth: o.table_builds_unlimited ? 'unlimited' : nullableNum(o.table_builds_per_month),
          reason: o.reason,
          setBy: { id: o.set_by, email: o.set_by_email },
          updatedAt: new Date(o.updated_at).toISOString(),
        }
      : null,
    usage: {
      periodStart: period.start.toISOString(),
      periodEnd: period.end.toISOString(),
      points,
      requests: num(row.period_requests),
      errors: num(row.period_errors),
      quotaFraction: limits.pointsPerMonth > 0 ? points / limits.pointsPerMonth : 0,
      recentRequests: num(row.recent_requests),
      recentErrors: num(row.recent_errors),
    },
  };
}

function checkCount(field: string, value: number | null, max: number): void {
  if (value === null) return;
  if (!Number.isSafeInteger(value) || value < 1) throw invalid(field, `must be a whole number of at least 1, or null for the plan's value; got ${value}.`);
  if (value > max) throw invalid(field, `must be at most ${max}; got ${value}.`);
}

export class OperatorService {
  constructor(private readonly services: Services) {}

  private period(now = Date.now()) {
    const start = periodStart(now);
    return { start: new Date(start), end: new Date(nextPeriod(start)) };
  }

  async organisations(actor: Actor, now = Date.now()): Promise<{ periodStart: string; periodEnd: string; items: OperatorOrganisation[] }> {
    this.services.access.requirePlatform(actor, 'organisations.list-all');
    const period = this.period(now);
    const rows = await store.listOrganisations(this.services.db, period.start, period.end, new Date(now - RECENT_WINDOW_MS));
    return { periodStart: period.start.toISOString(), periodEnd: period.end.toISOString(), items: rows.map((r) => toView(r, period)) };
  }

  async organisation(actor: Actor, organisationId: string, now = Date.now()): Promise<OperatorOrganisation> {
    this.services.access.requirePlatform(actor, 'organisations.list-all');
    if (!isUuid(organisationId)) throw organisationNotFound(String(organisationId));
    const period = this.period(now);
    const [row] = await store.listOrganisations(this.services.db, period.start, period.end, new Date(now - RECENT_WINDOW_MS), organisationId);
    if (!row) throw organisationNotFound(organisationId);
    return toView(row, period);
  }

  async setLimits(actor: Actor, organisationId: string, change: LimitsChange): Promise<OperatorOrganisation> {
    this.services.access.requirePlatform(actor, 'plans.manage');
    if (!isUuid(organisationId)) throw organisationNotFound(String(organisationId));
    const reason = change.reason.trim();
    if (reason.length < 3) throw invalid('reason', 'say briefly why the limits change (at least 3 characters); it goes to the audit log.');
    const o = change.overrides;
    if (o) {
      checkCount('overrides.pointsPerMonth', o.pointsPerMonth, OVERRIDE_BOUNDS.pointsPerMonth);
      checkCount('overrides.requestsPerSecond', o.requestsPerSecond, OVERRIDE_BOUNDS.requestsPerSecond);
      checkCount('overrides.maxBatch', o.maxBatch, this.services.config.EOS_MAX_PENDING_POINTS);
      if (o.tableBuildsPerMonth !== 'unlimited') checkCount('overrides.tableBuildsPerMonth', o.tableBuildsPerMonth, OVERRIDE_BOUNDS.tableBuildsPerMonth);
    }
    const before = await this.organisation(actor, organisationId);
    await this.services.db.transaction(async (trx) => {
      const current = await trx('organisations').where({ id: organisationId }).forUpdate().first('plan_id');
      if (!current) throw organisationNotFound(organisationId);
      if (change.plan !== undefined && change.plan !== current.plan_id) {
        if (!(await store.planExists(trx, change.plan))) throw invalid('plan', `there is no plan "${change.plan}"; plans are free, group and facility.`);
        await store.setPlan(trx, organisationId, change.plan);
      }
      if (o) {
        const none = o.pointsPerMonth === null && o.requestsPerSecond === null && o.maxBatch === null && o.tableBuildsPerMonth === null;
        if (none) await store.deleteOverride(trx, organisationId);
        else {
          await store.upsertOverride(trx, {
            organisation_id: organisationId,
            points_per_month: o.pointsPerMonth,
            requests_per_second: o.requestsPerSecond,
            max_batch: o.maxBatch,
            table_builds_per_month: o.tableBuildsPerMonth === 'unlimited' ? null : o.tableBuildsPerMonth,
            table_builds_unlimited: o.tableBuildsPerMonth === 'unlimited',
            reason,
            set_by: actor.userId,
          });
        }
      }
      const after = await trx('organisations as o')
        .join('plans as p', 'p.id', 'o.plan_id')
        .leftJoin('organisation_limit_overrides as x', 'x.organisation_id', 'o.id')
        .where('o.id', organisationId)
        .first('o.plan_id', ...Object.entries(store.EFFECTIVE_LIMIT_SQL).map(([name, sql]) => trx.raw(`${sql} AS ${name}`)));
      await this.services.audit.record(
        {
          organisationId,
          actor,
          action: 'plan.changed',
          target: { type: 'organisation', id: organisationId },
          details: {
            via: 'operator',
            reason,
            plan: { from: before.plan, to: after.plan_id },
            limits: {
              from: before.limits,
              to: {
                pointsPerMonth: num(after.points_per_month),
                requestsPerSecond: num(after.requests_per_second),
                maxBatch: num(after.max_batch),
                tableBuildsPerMonth: nullableNum(after.table_builds_per_month),
              },
            },
          },
          ip: actor.ip ?? null,
        },
        trx,
      );
    });
    // the evaluation path caches keys with their limits: drop this organisation's entries now
    this.services.keys.invalidateOrganisation(organisationId);
    return this.organisation(actor, organisationId);
  }

  async health(actor: Actor, now = Date.now()): Promise<OperatorHealth> {
    this.services.access.requirePlatform(actor, 'platform.health');
    const period = this.period(now);
    const [ready, samples, counts] = await Promise.all([
      readiness(this.services.db),
      this.metricSamples(),
      store.platformCounts(this.services.db, period.start),
    ]);
    const pick = (name: string, labels: Record<string, string> = {}) =>
      samples.find((s) => s.name === name && Object.entries(labels).every(([k, v]) => s.labels[k] === v))?.value ?? null;
    const sum = (name: string, keep: (s: MetricSample) => boolean = () => true) =>
      samples.filter((s) => s.name === name && keep(s)).reduce((a, s) => a + s.value, 0);
    const count = sum('fermiwell_http_request_duration_seconds_count');
    const seconds = sum('fermiwell_http_request_duration_seconds_sum');
    return {
      checkedAt: new Date(now).toISOString(),
      readiness: ready,
      instance: {
        uptimeSeconds: Math.round(process.uptime()),
        residentMemoryBytes: pick('fermiwell_process_resident_memory_bytes'),
        eventLoopLagP99Seconds: pick('fermiwell_nodejs_eventloop_lag_p99_seconds'),
        httpRequests: count,
        httpServerErrors: sum('fermiwell_http_request_duration_seconds_count', (s) => (s.labels['status'] ?? '').startsWith('5')),
        httpMeanSeconds: count > 0 ? seconds / count : null,
        pointsEvaluated: sum('fermiwell_points_evaluated_total'),
        poolThreads: pick('fermiwell_pool_threads'),
        poolQueueDepth: pick('fermiwell_pool_queue_depth'),
        poolUtilization: pick('fermiwell_pool_utilization_ratio'),
        dbConnectionsUsed: pick('fermiwell_db_pool_connections', { state: 'used' }),
        dbConnectionsFree: pick('fermiwell_db_pool_connections', { state: 'free' }),
        dbConnectionsPending: pick('fermiwell_db_pool_connections', { state: 'pending' }),
        meteringFlushLagSeconds: pick('fermiwell_metering_flush_lag_seconds'),
      },
      platform: { ...counts, periodStart: period.start.toISOString() },
    };
  }

  /** This instance's Prometheus registry as flat samples (the same numbers /metrics prints). */
  private async metricSamples(): Promise<MetricSample[]> {
    const metrics = await this.services.metrics.registry.getMetricsAsJSON();
    const out: MetricSample[] = [];
    for (const m of metrics) {
      for (const v of (m as { values?: Array<{ value: number; labels: Record<string, string | number>; metricName?: string }> }).values ?? []) {
        out.push({ name: v.metricName ?? m.name, labels: Object.fromEntries(Object.entries(v.labels ?? {}).map(([k, x]) => [k, String(x)])), value: Number(v.value) });
      }
    }
    return out;
  }
}
