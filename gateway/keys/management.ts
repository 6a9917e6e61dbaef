/**
 * API-key management for people (the Keys page, REST and GraphQL): list, create, rotate, revoke,
 * on top of KeyService, with the role × action matrix checked here: everyone in the organisation
 * reads keys' metadata (never a secret); developers create keys and rotate or revoke the ones
 * they created; maintainers and owners rotate or revoke any. Every change goes to the audit log.
 */
import type { Config } from '../config.js';
import type { AuditLog } from '../audit/service.js';
import type { AccessService, Actor } from '../organisations/access.js';
import { forbidden } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import type { KeyService } from './service.js';
import type { ApiKeyWithCreator } from './store.js';
import { SCOPES, type Scope } from './types.js';

/** A key's public id (keys/token.ts): anything else is no key, and never reaches SQL (PostgreSQL refuses a NUL in text with an error). */
const KEY_ID = /^[a-z0-9]{8}$/;

export type KeyState = 'active' | 'rotating' | 'expired' | 'revoked';

export interface KeyView {
  id: string;
  name: string;
  /** What a client shows of the token: fwk_<id>_… */
  prefix: string;
  scopes: string[];
  createdBy: { id: string; displayName: string | null; email: string | null } | null;
  createdAt: string;
  lastUsedAt: string | null;
  expiresAt: string | null;
  revokedAt: string | null;
  rotatedAt: string | null;
  /** Until when the secret before the last rotation still works (null when none does). */
  previousSecretValidUntil: string | null;
  state: KeyState;
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

export function keyView(row: ApiKeyWithCreator, now = Date.now()): KeyView {
  const graceUntil = row.previous_secret_expires_at ? new Date(row.previous_secret_expires_at).getTime() : 0;
  const state: KeyState = row.revoked_at
    ? 'revoked'
    : row.expires_at && new Date(row.expires_at).getTime() <= now
      ? 'expired'
      : graceUntil > now
        ? 'rotating'
        : 'active';
  return {
    id: row.id,
    name: row.name,
    prefix: `fwk_${row.id}_`,
    scopes: row.scopes,
    createdBy: row.created_by ? { id: row.created_by, displayName: row.creator_name, email: row.creator_email } : null,
    createdAt: new Date(row.created_at).toISOString(),
    lastUsedAt: iso(row.last_used_at),
    expiresAt: iso(row.expires_at),
    revokedAt: iso(row.revoked_at),
    rotatedAt: iso(row.rotated_at),
    previousSecretValidUntil: !row.revoked_at && graceUntil > now ? new Date(graceUntil).toISOString() : null,
    state,
  };
}

export interface NewKey {
  key: KeyView;
  /** The whole token, fwk_<id>_<secret>: shown this once, never stored. */
  token: string;
}

const keyNotFound = (id: string) => new ProblemError('key-not-found', 404, 'Key not found', `There is no key ${id} in this organisation.`);

export class KeyManagement {
  constructor(
    private readonly keys: KeyService,
    private readonly access: AccessService,
    private readonly audit: AuditLog,
    private readonly config: Config,
  ) {}

  get graceMs(): number {
    return this.config.KEY_ROTATION_GRACE_HOURS * 3_600_000;
  }

  async list(actor: Actor, organisationId: string): Promise<KeyView[]> {
    await this.access.require(actor, organisationId, 'keys.read');
    const now = Date.now();
    return (await this.keys.listWithCreators(organisationId)).map((r) => keyView(r, now));
  }

  async get(actor: Actor, organisationId: string, keyId: string): Promise<KeyView> {
    await this.access.require(actor, organisationId, 'keys.read');
    const row = KEY_ID.test(keyId) ? await this.keys.findWithCreator(organisationId, keyId) : undefined;
    if (!row) throw keyNotFound(keyId);
    return keyView(row);
  }

  async create(actor: Actor, organisationId: string, input: { name: string; scopes: Scope[]; expiresAt?: Date | null | undefined }): Promise<NewKey> {
    await this.access.require(actor, organisationId, 'keys.create');
    if (input.expiresAt && input.expiresAt.getTime() <= Date.now()) {
      throw new ProblemError('invalid-request', 400, 'Invalid request', 'expiresAt must be in the future.', { errors: [{ field: 'expiresAt', message: 'must be in the future' }] });
    }
    const scopes = [...new Set(input.scopes)];
    for (const scope of scopes) {
      if (!SCOPES.includes(scope)) throw new ProblemError('invalid-scope', 400, 'Unknown scope', `Scope "${scope}" does not exist; use ${SCOPES.join(', ')}.`);
    }
    const created = await this.keys.create({ organisationId, name: input.name, scopes, createdBy: actor.userId, expiresAt: input.expiresAt ?? null });
    await this.audit.record({ organisationId, actor, action: 'key.created', target: { type: 'api_key', id: created.id }, details: { name: input.name, scopes, expiresAt: iso(input.expiresAt) }, ip: actor.ip ?? null });
    return { key: keyView({ ...created.row, creator_name: actor.displayName, creator_email: actor.email }), token: created.token };
  }

  /** The key, after checking that the actor may rotate or revoke it (own key, or any key). */
  private async manageable(actor: Actor, organisationId: string, keyId: string): Promise<ApiKeyWithCreator> {
    const access = await this.access.require(actor, organisationId, 'keys.read');
    const row = KEY_ID.test(keyId) ? await this.keys.findWithCreator(organisationId, keyId) : undefined;
    if (!row) throw keyNotFound(keyId);
    if (this.access.allows(access, actor, 'keys.manage-any')) return row;
    if (row.created_by === actor.userId && this.access.allows(access, actor, 'keys.manage-own')) return row;
    if (this.access.allows(access, actor, 'keys.manage-own')) throw forbidden('keys.manage-any', access.role, 'You may rotate or revoke only the keys you created.');
    throw forbidden('keys.manage-own', access.role);
  }

  async rotate(actor: Actor, organisationId: string, keyId: string): Promise<NewKey> {
    const row = await this.manageable(actor, organisationId, keyId);
    if (row.revoked_at) throw new ProblemError('key-revoked', 409, 'Key revoked', `Key ${keyId} is revoked; a revoked key cannot be rotated. Create a new key.`);
    if (row.expires_at && new Date(row.expires_at).getTime() <= Date.now()) {
      throw new ProblemError('key-expired', 409, 'Key expired', `Key ${keyId} has expired; rotating would not bring it back. Create a new key.`);
    }
    const rotated = await this.keys.rotate(keyId, this.graceMs);
    if (!rotated) throw new ProblemError('key-revoked', 409, 'Key revoked', `Key ${keyId} was revoked meanwhile. Create a new key.`);
    await this.audit.record({
      organisationId,
      actor,
      action: 'key.rotated',
      target: { type: 'api_key', id: keyId },
      details: { name: row.name, previousSecretValidUntil: iso(rotated.row.previous_secret_expires_at) },
      ip: actor.ip ?? null,
    });
    return { key: keyView({ ...rotated.row, creator_name: row.creator_name, creator_email: row.creator_email }), token: rotated.token };
  }

  /** Revokes a key (idempotent: revoking a revoked key answers its current state). */
  async revoke(actor: Actor, organisationId: string, keyId: string): Promise<KeyView> {
    const row = await this.manageable(actor, organisationId, keyId);
    if (await this.keys.revoke(keyId)) {
      await this.audit.record({ organisationId, actor, action: 'key.revoked', target: { type: 'api_key', id: keyId }, details: { name: row.name }, ip: actor.ip ?? null });
    }
    return keyView((await this.keys.findWithCreator(organisationId, keyId))!);
  }
}
