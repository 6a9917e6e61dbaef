/** Plan rows (DESIGN.md §6) as the gateway uses them. */
import type { Knex } from 'knex';
import type { PlanLimits } from '../keys/types.js';

export interface PlanRow {
  id: string;
  name: string;
  price_cents: number;
  currency: string;
  points_per_month: string | number;
  requests_per_second: number;
  max_batch: number;
  table_builds_per_month: number | null;
}

/** A plan's id as its name reads in messages (DESIGN.md §2: Free, Group, Facility). */
export function planTitle(id: string): string {
  return id.charAt(0).toUpperCase() + id.slice(1);
}

export function toLimits(row: PlanRow): PlanLimits {
  return {
    plan: row.id,
    pointsPerMonth: Number(row.points_per_month),
    requestsPerSecond: row.requests_per_second,
    maxBatch: row.max_batch,
    tableBuildsPerMonth: row.table_builds_per_month,
  };
}

export async function listPlans(db: Knex): Promise<PlanRow[]> {
  return db('plans').select('*').orderBy('sort');
}
