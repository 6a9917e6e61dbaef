/**
 * Usage queries over `usage_minutes` (one row per organisation, key, endpoint and minute, written
 * by the meter): a series summed per time bucket and group, with the latency bucket counts summed
 * element-wise, and the points used in a period. Pure reads; the meter is the only writer.
 */
import type { Knex } from 'knex';
import { EFFECTIVE_LIMIT_SQL } from '../operator/store.js';

export const GRANULARITIES = ['minute', 'hour', 'day'] as const;
export type Granularity = (typeof GRANULARITIES)[number];
export const GROUP_BYS = ['none', 'key', 'endpoint'] as const;
export type GroupBy = (typeof GROUP_BYS)[number];

export interface SeriesRow {
  start: Date;
  /** '' when groupBy is none; the key id ('' = made without a key) or the endpoint otherwise. */
  group: string;
  requests: number;
  points: number;
  errors: number;
  /** Counts per latency bucket (usage/latency-buckets.ts), summed over the rows of the bucket. */
  latencyBuckets: number[];
}

const GROUP_COLUMN: Record<GroupBy, string> = { none: "''", key: 'api_key_id', endpoint: 'endpoint' };

/** Rows of [from, to) summed per `granularity` bucket (UTC) and group, ordered by start then group. */
export async function usageSeries(db: Knex, organisationId: string, from: Date, to: Date, granularity: Granularity, groupBy: GroupBy): Promise<SeriesRow[]> {
  // granularity and group column come from closed lists above, never from the request text
  const group = GROUP_COLUMN[groupBy];
  const result = await db.raw(
    `WITH r AS (
       SELECT date_trunc('${granularity}', minute AT TIME ZONE 'UTC') AT TIME ZONE 'UTC' AS t, ${group} AS g,
              requests, points, errors, latency_buckets
         FROM usage_minutes
        WHERE organisation_id = ? AND minute >= ? AND minute < ?
     ),
     s AS (
       SELECT t, g, sum(requests) AS requests, sum(points) AS points, sum(errors) AS errors FROM r GROUP BY t, g
     ),
     b AS (
       SELECT t, g, u.i, sum(u.c) AS c FROM r, unnest(r.latency_buckets) WITH ORDINALITY AS u(c, i) GROUP BY t, g, u.i
     )
     SELECT s.t, s.g, s.requests, s.points, s.errors,
            (SELECT array_agg(b.c ORDER BY b.i) FROM b WHERE b.t = s.t AND b.g = s.g) AS buckets
       FROM s ORDER BY s.t, s.g`,
    [organisationId, from, to],
  );
  return (result.rows as Array<Record<string, unknown>>).map((row) => ({
    start: new Date(row['t'] as Date),
    group: String(row['g'] ?? ''),
    requests: Number(row['requests']),
    points: Number(row['points']),
    errors: Number(row['errors']),
    latencyBuckets: ((row['buckets'] as Array<string | number> | null) ?? []).map(Number),
  }));
}

/** Points recorded for the organisation in [from, to). */
export async function pointsUsed(db: Knex, organisationId: string, from: Date, to: Date): Promise<number> {
  const row = await db('usage_minutes').where('organisation_id', organisationId).andWhere('minute', '>=', from).andWhere('minute', '<', to).sum({ points: 'points' }).first();
  return Number(row?.points ?? 0);
}

export interface OrganisationPlan {
  plan: string;
  pointsPerMonth: number;
}

export async function organisationPlan(db: Knex, organisationId: string): Promise<OrganisationPlan | undefined> {
  // the quota is the plan's unless an operator overrode it (migration 007)
  const row = await db('organisations as o')
    .join('plans as p', 'p.id', 'o.plan_id')
    .leftJoin('organisation_limit_overrides as x', 'x.organisation_id', 'o.id')
    .where('o.id', organisationId)
    .first('p.id as plan', db.raw(`${EFFECTIVE_LIMIT_SQL.points_per_month} AS points_per_month`));
  return row ? { plan: String(row.plan), pointsPerMonth: Number(row.points_per_month) } : undefined;
}
