/** SQL for API keys (knex, bindings only). */
import type { Knex } from 'knex';
import type { PlanRow } from '../plans/store.js';

export interface ApiKeyRow {
  id: string;
  organisation_id: string;
  name: string;
  secret_hash: string;
  scopes: string[];
  created_by: string | null;
  created_at: Date;
  last_used_at: Date | null;
  expires_at: Date | null;
  revoked_at: Date | null;
}

export type ApiKeyWithPlan = ApiKeyRow & { plan: PlanRow };

export async function findKeyWithPlan(db: Knex, id: string): Promise<ApiKeyWithPlan | undefined> {
  const row = await db('api_keys as k')
    .join('organisations as o', 'o.id', 'k.organisation_id')
    .join('plans as p', 'p.id', 'o.plan_id')
    .where('k.id', id)
    .first(
      'k.*',
      db.raw(
        "json_build_object('id', p.id, 'name', p.name, 'price_cents', p.price_cents, 'currency', p.currency, 'points_per_month', p.points_per_month, 'requests_per_second', p.requests_per_second, 'max_batch', p.max_batch, 'table_builds_per_month', p.table_builds_per_month) as plan",
      ),
    );
  return row as ApiKeyWithPlan | undefined;
}

export async function insertKey(db: Knex, row: Omit<ApiKeyRow, 'created_at' | 'last_used_at' | 'revoked_at'>): Promise<ApiKeyRow> {
  const [inserted] = await db('api_keys').insert(row).returning('*');
  return inserted as ApiKeyRow;
}

export async function listKeys(db: Knex, organisationId: string): Promise<ApiKeyRow[]> {
  return db('api_keys').where({ organisation_id: organisationId }).orderBy('created_at', 'desc');
}

export async function revokeKey(db: Knex, id: string): Promise<number> {
  return db('api_keys').where({ id }).whereNull('revoked_at').update({ revoked_at: db.fn.now() });
}

export async function touchKeys(db: Knex, ids: string[]): Promise<void> {
  if (ids.length === 0) return;
  await db('api_keys').whereIn('id', ids).update({ last_used_at: db.fn.now() });
}
