/**
 * The audit log of security-relevant actions: sign-ins and their failures, password changes,
 * organisation changes, members and roles, invitations, API keys (and plan changes, later).
 * Recorded by the services that act, inside their transaction where they have one; read by
 * owners, maintainers and operators (roles.ts: audit.read), newest first, filtered by action
 * (exact, or a prefix ending in "*"), actor and time range, paged by an opaque cursor.
 *
 * Account-level events (sign-in, password) carry no organisation; an organisation's log also shows
 * those of its current members, marked scope "account".
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { ProblemError } from '../shared/problem.js';
import type { Actor } from '../organisations/access.js';

export const AUDIT_ACTIONS = [
  'user.signed-up',
  'auth.email-verified',
  'auth.sign-in',
  'auth.sign-in-failed',
  'auth.sign-out',
  'auth.refresh-token-reused',
  'auth.password-reset-requested',
  'auth.password-reset',
  'auth.password-changed',
  'organisation.created',
  'organisation.renamed',
  'organisation.deleted',
  'member.joined',
  'member.role-changed',
  'member.removed',
  'member.left',
  'invitation.created',
  'invitation.revoked',
  'invitation.accepted',
  'key.created',
  'key.rotated',
  'key.revoked',
  'plan.changed',
  'billing.card-changed',
  'mixture.created',
  'mixture.changed',
  'mixture.deleted',
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

export interface AuditEntry {
  organisationId?: string | null;
  actor?: Pick<Actor, 'userId' | 'email'> | null;
  action: AuditAction;
  target?: { type: string; id: string } | null;
  details?: Record<string, unknown>;
  ip?: string | null;
}

export interface AuditFilter {
  action?: string | undefined;
  actorId?: string | undefined;
  from?: Date | undefined;
  to?: Date | undefined;
  limit?: number | undefined;
  cursor?: string | undefined;
}

export interface AuditItem {
  id: string;
  createdAt: string;
  action: string;
  scope: 'organisation' | 'account';
  organisationId: string | null;
  actor: { id: string | null; email: string | null; displayName: string | null } | null;
  target: { type: string; id: string } | null;
  details: Record<string, unknown>;
  ip: string | null;
}

export interface AuditPage {
  items: AuditItem[];
  nextCursor: string | null;
}

export const AUDIT_PAGE_DEFAULT = 50;
export const AUDIT_PAGE_MAX = 200;

function encodeCursor(time: string, id: string): string {
  return Buffer.from(`${time}|${id}`, 'utf8').toString('base64url');
}

function decodeCursor(cursor: string): { time: string; id: string } {
  const text = Buffer.from(cursor, 'base64url').toString('utf8');
  const match = /^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z)\|(\d+)$/.exec(text);
  if (!match) throw new ProblemError('invalid-cursor', 400, 'Invalid cursor', 'The cursor was not issued by this endpoint. Start again without one.');
  return { time: match[1]!, id: match[2]! };
}

export class AuditLog {
  constructor(private readonly db: Knex, private readonly logger: Logger) {}

  /** Writes one entry; inside `trx` when given, so it commits or rolls back with the action. */
  async record(entry: AuditEntry, trx?: Knex | Knex.Transaction): Promise<void> {
    await (trx ?? this.db)('audit_log').insert({
      organisation_id: entry.organisationId ?? null,
      actor_user_id: entry.actor?.userId ?? null,
      actor_email: entry.actor?.email ?? null,
      action: entry.action,
      target_type: entry.target?.type ?? null,
      target_id: entry.target?.id ?? null,
      details: JSON.stringify(entry.details ?? {}),
      ip: entry.ip ?? null,
    });
  }

  /** For events outside any transaction whose failure must not fail the request (e.g. a failed sign-in): logged, never thrown. */
  async recordQuietly(entry: AuditEntry): Promise<void> {
    await this.record(entry).catch((error) => this.logger.error({ err: error, action: entry.action }, 'audit entry not written'));
  }

  /** One page of an organisation's log. Authorisation is the caller's job (OrganisationService). */
  async page(organisationId: string, filter: AuditFilter): Promise<AuditPage> {
    const limit = Math.min(Math.max(1, filter.limit ?? AUDIT_PAGE_DEFAULT), AUDIT_PAGE_MAX);
    const db = this.db;
    const query = db('audit_log as a')
      .leftJoin('users as u', 'u.id', 'a.actor_user_id')
      .where((w) =>
        w
          .where('a.organisation_id', organisationId)
          .orWhere((account) =>
            account
              .whereNull('a.organisation_id')
              .andWhere('a.target_type', 'user')
              .whereIn('a.target_id', db('memberships').where('organisation_id', organisationId).select(db.raw('user_id::text'))),
          ),
      );
    if (filter.action) {
      if (filter.action.endsWith('*')) query.andWhere('a.action', 'like', filter.action.slice(0, -1).replace(/[\\%_]/g, '\\$&') + '%');
      else query.andWhere('a.action', filter.action);
    }
    if (filter.actorId) query.andWhere('a.actor_user_id', filter.actorId);
    if (filter.from) query.andWhere('a.created_at', '>=', filter.from);
    if (filter.to) query.andWhere('a.created_at', '<', filter.to);
    if (filter.cursor) {
      const c = decodeCursor(filter.cursor);
      query.andWhere(db.raw('(a.created_at, a.id) < (?::timestamptz, ?::bigint)', [c.time, c.id]));
    }
    const rows: Array<Record<string, any>> = await query
      .orderBy([
        { column: 'a.created_at', order: 'desc' },
        { column: 'a.id', order: 'desc' },
      ])
      .limit(limit + 1)
      .select(
        'a.id',
        'a.organisation_id',
        'a.actor_user_id',
        'a.actor_email',
        'a.action',
        'a.target_type',
        'a.target_id',
        'a.details',
        'a.ip',
        'a.created_at',
        'u.display_name as actor_display_name',
        db.raw(`to_char(a.created_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') as cursor_time`),
      );
    const more = rows.length > limit;
    const pageRows = more ? rows.slice(0, limit) : rows;
    const last = pageRows[pageRows.length - 1];
    return {
      items: pageRows.map((r) => ({
        id: String(r['id']),
        createdAt: new Date(r['created_at']).toISOString(),
        action: r['action'],
        scope: r['organisation_id'] ? 'organisation' : 'account',
        organisationId: r['organisation_id'] ?? null,
        actor: r['actor_user_id'] || r['actor_email'] ? { id: r['actor_user_id'] ?? null, email: r['actor_email'] ?? null, displayName: r['actor_display_name'] ?? null } : null,
        target: r['target_type'] ? { type: r['target_type'], id: r['target_id'] } : null,
        details: r['details'] ?? {},
        ip: r['ip'] ?? null,
      })),
      nextCursor: more && last ? encodeCursor(last['cursor_time'], String(last['id'])) : null,
    };
  }
}
