/** SQL for users, one-time e-mail tokens, sessions and refresh tokens (knex, bindings only). */
import type { Knex } from 'knex';
import type { PlatformRole } from '../shared/roles.js';

export interface UserRow {
  id: string;
  email: string;
  display_name: string;
  password_hash: string;
  email_verified_at: Date | null;
  platform_role: PlatformRole | null;
  created_at: Date;
  updated_at: Date;
}

export type EmailTokenPurpose = 'verify-email' | 'reset-password';

export const normaliseEmail = (email: string) => email.trim();

export function findUserByEmail(db: Knex, email: string): Promise<UserRow | undefined> {
  return db('users').whereRaw('lower(email) = lower(?)', [normaliseEmail(email)]).first();
}

export function findUserById(db: Knex, id: string): Promise<UserRow | undefined> {
  return db('users').where({ id }).first();
}

export async function insertUser(db: Knex, row: { email: string; display_name: string; password_hash: string; email_verified_at?: Date | Knex.Raw | null }): Promise<UserRow> {
  const [inserted] = await db('users').insert(row).returning('*');
  return inserted as UserRow;
}

export async function updateUser(db: Knex, id: string, changes: Partial<Pick<UserRow, 'display_name' | 'password_hash'>> & { email_verified_at?: Date | Knex.Raw | null }) {
  await db('users').where({ id }).update({ ...changes, updated_at: db.fn.now() });
}

export async function insertEmailToken(db: Knex, row: { user_id: string; purpose: EmailTokenPurpose; token_hash: string; expires_at: Date }) {
  await db('email_tokens').insert(row);
}

/** Marks every unused token of this purpose used (a new one replaces them, or the purpose is done). */
export async function retireEmailTokens(db: Knex, userId: string, purpose: EmailTokenPurpose) {
  await db('email_tokens').where({ user_id: userId, purpose }).whereNull('used_at').update({ used_at: db.fn.now() });
}

export interface EmailTokenRow {
  id: string;
  user_id: string;
  purpose: EmailTokenPurpose;
  expires_at: Date;
  used_at: Date | null;
}

export function findEmailTokenForUpdate(trx: Knex.Transaction, tokenHash: string, purpose: EmailTokenPurpose): Promise<EmailTokenRow | undefined> {
  return trx('email_tokens').where({ token_hash: tokenHash, purpose }).forUpdate().first();
}

export async function useEmailToken(trx: Knex.Transaction, id: string) {
  await trx('email_tokens').where({ id }).update({ used_at: trx.fn.now() });
}

export interface SessionRow {
  id: string;
  user_id: string;
  expires_at: Date;
  revoked_at: Date | null;
}

export async function insertSession(db: Knex, row: { user_id: string; expires_at: Date; ip: string | null; user_agent: string | null }): Promise<SessionRow> {
  const [inserted] = await db('sessions').insert(row).returning('*');
  return inserted as SessionRow;
}

export async function insertRefreshToken(db: Knex, row: { session_id: string; parent_id: string | null; token_hash: string; expires_at: Date }) {
  await db('refresh_tokens').insert(row);
}

export interface RefreshTokenWithSession {
  id: string;
  session_id: string;
  expires_at: Date;
  used_at: Date | null;
  revoked_at: Date | null;
  user_id: string;
  session_expires_at: Date;
  session_revoked_at: Date | null;
}

export function findRefreshTokenForUpdate(trx: Knex.Transaction, tokenHash: string): Promise<RefreshTokenWithSession | undefined> {
  return trx('refresh_tokens as r')
    .join('sessions as s', 's.id', 'r.session_id')
    .where('r.token_hash', tokenHash)
    .forUpdate()
    .first('r.id', 'r.session_id', 'r.expires_at', 'r.used_at', 'r.revoked_at', 's.user_id', 's.expires_at as session_expires_at', 's.revoked_at as session_revoked_at');
}

export async function markRefreshTokenUsed(trx: Knex.Transaction, id: string) {
  await trx('refresh_tokens').where({ id }).update({ used_at: trx.fn.now() });
}

/** Ends sessions (a whole refresh-token family each): the session and every token in it. */
export async function revokeSessions(db: Knex, where: { sessionId?: string; userId?: string; exceptSessionId?: string }, reason: string): Promise<number> {
  const query = db('sessions').whereNull('revoked_at');
  if (where.sessionId) query.where('id', where.sessionId);
  if (where.userId) query.where('user_id', where.userId);
  if (where.exceptSessionId) query.whereNot('id', where.exceptSessionId);
  const ids: Array<{ id: string }> = await query.update({ revoked_at: db.fn.now(), revoked_reason: reason }).returning('id');
  if (ids.length > 0) {
    await db('refresh_tokens').whereIn('session_id', ids.map((r) => r.id)).whereNull('revoked_at').update({ revoked_at: db.fn.now() });
  }
  return ids.length;
}

export async function touchSession(db: Knex, id: string) {
  await db('sessions').where({ id }).update({ last_refreshed_at: db.fn.now() });
}

/** The user of a live session (not revoked, not past its absolute end), in one query. */
export function findLiveSessionUser(db: Knex, sessionId: string, userId: string): Promise<UserRow | undefined> {
  return db('sessions as s')
    .join('users as u', 'u.id', 's.user_id')
    .where('s.id', sessionId)
    .andWhere('s.user_id', userId)
    .whereNull('s.revoked_at')
    .andWhere('s.expires_at', '>', db.fn.now())
    .first('u.*');
}
