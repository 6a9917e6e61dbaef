/**
 * API keys: creation (the secret leaves the service exactly once), verification with a short cache,
 * revocation, and last-used tracking without a write per request (ids collected in memory, written
 * in one UPDATE every few seconds and at shutdown).
 *
 * The cache holds a key's row and its organisation's plan for CACHE_TTL_MS, so revocation, expiry
 * and plan changes reach every gateway instance within that time; this instance also drops its
 * entry at once on revoke.
 *
 * Rotation keeps the key's id and gives it a new secret; the previous secret keeps working for the
 * grace period (KEY_ROTATION_GRACE_HOURS, 24 h by default) so running jobs can switch without
 * failing, then stops. A second rotation within the grace period ends the oldest secret at once
 * (only the current and the one before it are kept). A secret that does not match a cached row
 * makes one fresh read, so a rotation done on another instance is seen at once.
 */
import type { Knex } from 'knex';
import { ProblemError } from '../shared/problem.js';
import { toLimits } from '../plans/store.js';
import * as store from './store.js';
import { formatToken, hashSecret, newKeyId, newSecret, parseToken, secretMatches } from './token.js';
import { SCOPES, type ApiKeyContext, type Scope } from './types.js';

export const CACHE_TTL_MS = 5_000;
const TOUCH_INTERVAL_MS = 10_000;

interface CacheEntry {
  at: number;
  row: store.ApiKeyWithPlan | undefined;
}

export interface CreatedKey {
  id: string;
  token: string;
  row: store.ApiKeyRow;
}

export class KeyService {
  private readonly cache = new Map<string, CacheEntry>();
  private readonly used = new Set<string>();
  private readonly timer: NodeJS.Timeout;

  constructor(private readonly db: Knex) {
    this.timer = setInterval(() => void this.flushLastUsed().catch(() => undefined), TOUCH_INTERVAL_MS);
    this.timer.unref();
  }

  async create(input: { organisationId: string; name: string; scopes: Scope[]; createdBy?: string | null; expiresAt?: Date | null }): Promise<CreatedKey> {
    for (const scope of input.scopes) {
      if (!SCOPES.includes(scope)) throw new ProblemError('invalid-scope', 400, 'Unknown scope', `Scope "${scope}" does not exist; use ${SCOPES.join(', ')}.`);
    }
    const id = newKeyId();
    const secret = newSecret();
    const row = await store.insertKey(this.db, {
      id,
      organisation_id: input.organisationId,
      name: input.name,
      secret_hash: hashSecret(secret),
      scopes: input.scopes,
      created_by: input.createdBy ?? null,
      expires_at: input.expiresAt ?? null,
    });
    return { id, token: formatToken(id, secret), row };
  }

  /** New secret for a live key; the old one works until now + graceMs. undefined if the key is revoked or missing. */
  async rotate(id: string, graceMs: number): Promise<CreatedKey | undefined> {
    const secret = newSecret();
    const row = await store.rotateKey(this.db, id, hashSecret(secret), new Date(Date.now() + graceMs));
    this.cache.delete(id);
    return row ? { id, token: formatToken(id, secret), row } : undefined;
  }

  listWithCreators(organisationId: string) {
    return store.listKeysWithCreators(this.db, organisationId);
  }

  findWithCreator(organisationId: string, id: string) {
    return store.findKeyWithCreator(this.db, organisationId, id);
  }

  async revoke(id: string): Promise<boolean> {
    const changed = await store.revokeKey(this.db, id);
    this.cache.delete(id);
    return changed > 0;
  }

  list(organisationId: string) {
    return store.listKeys(this.db, organisationId);
  }

  /** Verifies a bearer token; throws 401 problems that say what is wrong without leaking more. */
  async authenticate(authorization: string | undefined): Promise<ApiKeyContext> {
    if (!authorization) {
      throw new ProblemError('missing-api-key', 401, 'API key required', 'Send your key as "Authorization: Bearer fwk_…". Keys are created on the Keys page of the dashboard.');
    }
    const match = /^Bearer\s+(\S+)$/i.exec(authorization);
    const parsed = match ? parseToken(match[1]!) : undefined;
    if (!parsed) {
      throw new ProblemError('invalid-api-key', 401, 'Invalid API key', 'The Authorization header must be "Bearer fwk_<8-character id>_<32-character secret>".');
    }
    let row = await this.lookup(parsed.id);
    let which = row ? secretMatch(parsed.secret, row) : 'none';
    if (row && which === 'none') {
      // perhaps rotated on another instance since this row was cached
      row = await this.lookup(parsed.id, true);
      which = row ? secretMatch(parsed.secret, row) : 'none';
    }
    if (!row || which === 'none') {
      throw new ProblemError('invalid-api-key', 401, 'Invalid API key', 'This key is not valid. Check that it was copied whole, or create a new one.');
    }
    if (which === 'previous-expired' && !row.revoked_at) {
      throw new ProblemError(
        'rotated-api-key',
        401,
        'API key secret replaced',
        `Key ${row.id} was rotated and this secret stopped working at ${new Date(row.previous_secret_expires_at!).toISOString()}. Use the new secret shown at rotation, or rotate again.`,
      );
    }
    if (row.revoked_at) {
      throw new ProblemError('revoked-api-key', 401, 'API key revoked', `Key ${row.id} was revoked. Use another key or create a new one.`);
    }
    if (row.expires_at && new Date(row.expires_at).getTime() <= Date.now()) {
      throw new ProblemError('expired-api-key', 401, 'API key expired', `Key ${row.id} expired at ${new Date(row.expires_at).toISOString()}. Create a new key or rotate this one.`);
    }
    this.used.add(row.id);
    return {
      keyId: row.id,
      organisationId: row.organisation_id,
      scopes: row.scopes.filter((s): s is Scope => (SCOPES as readonly string[]).includes(s)),
      limits: toLimits(row.plan),
    };
  }

  private async lookup(id: string, fresh = false): Promise<store.ApiKeyWithPlan | undefined> {
    const now = Date.now();
    const hit = this.cache.get(id);
    if (!fresh && hit && now - hit.at < CACHE_TTL_MS) return hit.row;
    const row = await store.findKeyWithPlan(this.db, id);
    if (this.cache.size > 10_000) this.cache.clear();
    this.cache.set(id, { at: now, row });
    return row;
  }

  /** Forget cached rows of an organisation (e.g. after a plan change on this instance). */
  invalidateOrganisation(organisationId: string) {
    for (const [id, entry] of this.cache) if (entry.row?.organisation_id === organisationId) this.cache.delete(id);
  }

  async flushLastUsed(): Promise<void> {
    if (this.used.size === 0) return;
    const ids = [...this.used];
    this.used.clear();
    await store.touchKeys(this.db, ids);
  }

  async close(): Promise<void> {
    clearInterval(this.timer);
    await this.flushLastUsed().catch(() => undefined);
  }
}

/** Which of the key's secrets this is: the current one, the previous one within or past its grace period, or none. */
function secretMatch(secret: string, row: store.ApiKeyRow): 'current' | 'previous' | 'previous-expired' | 'none' {
  if (secretMatches(secret, row.secret_hash)) return 'current';
  if (row.previous_secret_hash && secretMatches(secret, row.previous_secret_hash)) {
    const until = row.previous_secret_expires_at ? new Date(row.previous_secret_expires_at).getTime() : 0;
    return until > Date.now() ? 'previous' : 'previous-expired';
  }
  return 'none';
}

export { hashSecret };
