/** SQL for API keys (knex, bindings only). */
import type { Knex } from 'knex';
import type { PlanRow } from '../plans/store.js';
import { EFFECTIVE_LIMIT_SQL } from '../operator/store.js';

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
  /** Set by a rotation: the secret before it, and until when that one still works (migration 003). */
  rotated_at?: Date | null;
  previous_secret_hash?: string | null;
  previous_secret_expires_at?: Date | null;
}

export type ApiKeyWithPlan = ApiKeyRow & { plan: PlanRow };

export async function findKeyWithPlan(db: Knex, id: string): Promise<ApiKeyWithPlan | undefined> {
  const row = await db('api_keys as k')
    .join('organisations as o', 'o.id', 'k.organisation_id')
    .join('plans as p', 'p.id', 'o.plan_id')
    // an operator's per-organisation overrides (migration 007) take the place of plan values
    .leftJoin('organisation_limit_overrides as x', 'x.organisation_id', 'o.id')
    .where('k.id', id)
    .first(
      'k.*',
      db.raw(
        `json_build_object('id', p.id, 'name', p.name, 'price_cents', p.price_cents, 'currency', p.currency, 'points_per_month', ${EFFECTIVE_LIMIT_SQL.points_per_month}, 'requests_per_second', ${EFFECTIVE_LIMIT_SQL.requests_per_second}, 'max_batch', ${EFFECTIVE_LIMIT_SQL.max_batch}, 'table_builds_per_month', ${EFFECTIVE_LIMIT_SQL.table_builds_per_month}) as plan`,
      ),
    );
  return row as ApiKeyWithPlan | undefined;
}

export async function insertKey(db: Knex, row: Omit<ApiKeyRow, 'created_at' | 'last_used_at' | 'revoked_at' | 'rotated_at' | 'previous_secret_hash' | 'previous_secret_expires_at'>): Promise<ApiKeyRow> {
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

export type ApiKeyWithCreator = ApiKeyRow & { creator_name: string | null; creator_email: string | null };

/** Keys of an organisation with who created them, newest first (the Keys page). */
export async function listKeysWithCreators(db: Knex, organisationId: string): Promise<ApiKeyWithCreator[]> {
  return db('api_keys as k')
    .leftJoin('users as u', 'u.id', 'k.created_by')
    .where('k.organisation_id', organisationId)
    .orderBy('k.created_at', 'desc')
    .select('k.*', 'u.display_name as creator_name', 'u.email as creator_email');
}

export async function findKeyWithCreator(db: Knex, organisationId: string, id: string): Promise<ApiKeyWithCreator | undefined> {
  return db('api_keys as k')
    .leftJoin('users as u', 'u.id', 'k.created_by')
    .where({ 'k.organisation_id': organisationId, 'k.id': id })
    .first('k.*', 'u.display_name as creator_name', 'u.email as creator_email');
}

/** Replaces the secret; the previous one stays valid until `graceUntil`. Only live keys rotate. */
export async function rotateKey(db: Knex, id: string, secretHash: string, graceUntil: Date): Promise<ApiKeyRow | undefined> {
  const [row] = await db('api_keys')
    .where({ id })
    .whereNull('revoked_at')
    .update({
      previous_secret_hash: db.ref('secret_hash'),
      previous_secret_expires_at: graceUntil,
      secret_hash: secretHash,
      rotated_at: db.fn.now(),
    })
    .returning('*');
  return row as ApiKeyRow | undefined;
}
