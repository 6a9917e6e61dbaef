/**
 * SQL of the Operator page (knex, bindings only): every organisation with its plan, its effective
 * limits (plan values under the operator's overrides, migration 007) and this period's usage; the
 * override row itself; platform counts for the health panel.
 *
 * `effectiveLimitColumns` is the one place that says how an override combines with the plan:
 * other features reading limits (API keys on the evaluation path, the usage quota, table builds)
 * join `organisation_limit_overrides as x` and select these expressions.
 */
import type { Knex } from 'knex';

/** Select expressions over `plans as p` left-joined with `organisation_limit_overrides as x`. */
export const EFFECTIVE_LIMIT_SQL = {
  points_per_month: 'COALESCE(x.points_per_month, p.points_per_month)',
  requests_per_second: 'COALESCE(x.requests_per_second, p.requests_per_second)',
  max_batch: 'COALESCE(x.max_batch, p.max_batch)',
  table_builds_per_month: 'CASE WHEN x.table_builds_unlimited THEN NULL ELSE COALESCE(x.table_builds_per_month, p.table_builds_per_month) END',
} as const;

export interface OverrideRow {
  organisation_id: string;
  points_per_month: string | number | null;
  requests_per_second: number | null;
  max_batch: number | null;
  table_builds_per_month: number | null;
  table_builds_unlimited: boolean;
  reason: string;
  set_by: string | null;
  updated_at: Date;
}

export interface OperatorOrganisationRow {
  id: string;
  name: string;
  slug: string;
  created_at: Date;
  plan_id: string;
  plan_name: string;
  member_count: string | number;
  key_count: string | number;
  plan_points_per_month: string | number;
  plan_requests_per_second: number;
  plan_max_batch: number;
  plan_table_builds_per_month: number | null;
  points_per_month: string | number;
  requests_per_second: number;
  max_batch: number;
  table_builds_per_month: number | null;
  override: (Omit<OverrideRow, 'organisation_id' | 'updated_at'> & { updated_at: string; set_by_email: string | null }) | null;
  period_points: string | number | null;
  period_requests: string | number | null;
  period_errors: string | number | null;
  recent_errors: string | number | null;
  recent_requests: string | number | null;
}

/**
 * Every organisation (or one) with plan, effective limits, override and usage in [periodStart,
 * periodEnd), plus requests and errors since `recentSince` (failing organisations stand out).
 */
export async function listOrganisations(db: Knex, periodStart: Date, periodEnd: Date, recentSince: Date, organisationId?: string): Promise<OperatorOrganisationRow[]> {
  const usage = db('usage_minutes')
    .select('organisation_id')
    .sum({ period_points: 'points', period_requests: 'requests', period_errors: 'errors' })
    .where('minute', '>=', periodStart)
    .andWhere('minute', '<', periodEnd)
    .groupBy('organisation_id')
    .as('u');
  const recent = db('usage_minutes')
    .select('organisation_id')
    .sum({ recent_requests: 'requests', recent_errors: 'errors' })
    .where('minute', '>=', recentSince)
    .groupBy('organisation_id')
    .as('r');
  const query = db('organisations as o')
    .join('plans as p', 'p.id', 'o.plan_id')
    .leftJoin('organisation_limit_overrides as x', 'x.organisation_id', 'o.id')
    .leftJoin('users as s', 's.id', 'x.set_by')
    .leftJoin(usage, 'u.organisation_id', 'o.id')
    .leftJoin(recent, 'r.organisation_id', 'o.id')
    .select(
      'o.id',
      'o.name',
      'o.slug',
      'o.created_at',
      'o.plan_id',
      'p.name as plan_name',
      db.raw('(SELECT count(*) FROM memberships m WHERE m.organisation_id = o.id) AS member_count'),
      db.raw('(SELECT count(*) FROM api_keys k WHERE k.organisation_id = o.id AND k.revoked_at IS NULL) AS key_count'),
      'p.points_per_month as plan_points_per_month',
      'p.requests_per_second as plan_requests_per_second',
      'p.max_batch as plan_max_batch',
      'p.table_builds_per_month as plan_table_builds_per_month',
      ...Object.entries(EFFECTIVE_LIMIT_SQL).map(([name, sql]) => db.raw(`${sql} AS ${name}`)),
      db.raw(
        `CASE WHEN x.organisation_id IS NULL THEN NULL ELSE json_build_object(
           'points_per_month', x.points_per_month, 'requests_per_second', x.requests_per_second, 'max_batch', x.max_batch,
           'table_builds_per_month', x.table_builds_per_month, 'table_builds_unlimited', x.table_builds_unlimited,
           'reason', x.reason, 'set_by', x.set_by, 'set_by_email', s.email, 'updated_at', x.updated_at) END AS override`,
      ),
      'u.period_points',
      'u.period_requests',
      'u.period_errors',
      'r.recent_requests',
      'r.recent_errors',
    )
    .orderBy([{ column: 'o.name' }, { column: 'o.id' }]);
  if (organisationId) query.where('o.id', organisationId);
  return query;
}

export async function findOverride(db: Knex | Knex.Transaction, organisationId: string): Promise<OverrideRow | undefined> {
  return db('organisation_limit_overrides').where({ organisation_id: organisationId }).first();
}

export async function planExists(db: Knex | Knex.Transaction, planId: string): Promise<boolean> {
  return Boolean(await db('plans').where({ id: planId }).first('id'));
}

export async function setPlan(db: Knex | Knex.Transaction, organisationId: string, planId: string): Promise<void> {
  await db('organisations').where({ id: organisationId }).update({ plan_id: planId, updated_at: db.fn.now() });
}

export async function upsertOverride(db: Knex | Knex.Transaction, row: Omit<OverrideRow, 'updated_at'>): Promise<void> {
  await db('organisation_limit_overrides')
    .insert({ ...row, updated_at: db.fn.now() })
    .onConflict('organisation_id')
    .merge();
}

export async function deleteOverride(db: Knex | Knex.Transaction, organisationId: string): Promise<void> {
  await db('organisation_limit_overrides').where({ organisation_id: organisationId }).delete();
}

/** Counts across the platform for the health panel. */
export async function platformCounts(db: Knex, periodStart: Date): Promise<{ organisations: number; users: number; activeKeys: number; pointsThisPeriod: number; requestsThisPeriod: number; errorsThisPeriod: number }> {
  const [orgs, users, keys, usage] = await Promise.all([
    db('organisations').count<{ n: string }[]>({ n: '*' }),
    db('users').count<{ n: string }[]>({ n: '*' }),
    db('api_keys').whereNull('revoked_at').andWhere((w) => w.whereNull('expires_at').orWhere('expires_at', '>', db.fn.now())).count<{ n: string }[]>({ n: '*' }),
    db('usage_minutes').where('minute', '>=', periodStart).sum({ points: 'points', requests: 'requests', errors: 'errors' }),
  ]);
  const u = (usage as Array<Record<string, unknown>>)[0] ?? {};
  return {
    organisations: Number(orgs[0]?.n ?? 0),
    users: Number(users[0]?.n ?? 0),
    activeKeys: Number(keys[0]?.n ?? 0),
    pointsThisPeriod: Number(u['points'] ?? 0),
    requestsThisPeriod: Number(u['requests'] ?? 0),
    errorsThisPeriod: Number(u['errors'] ?? 0),
  };
}
