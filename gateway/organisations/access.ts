/**
 * Enforcement of the role × action matrix (shared/roles.ts) for every service: who the caller is
 * in an organisation, and whether that allows the action. Someone who is neither a member nor an
 * operator gets 404 — an organisation's existence is not disclosed to outsiders.
 */
import type { Knex } from 'knex';
import { ProblemError } from '../shared/problem.js';
import { can, describeAction, type Action, type OrganisationRole, type PlatformRole } from '../shared/roles.js';
import { isUuid } from '../shared/validate.js';

/** The signed-in person acting, as services see them. */
export interface Actor {
  userId: string;
  email: string;
  displayName: string;
  platformRole: PlatformRole | null;
  /** Client address, for the audit log. */
  ip?: string | null | undefined;
}

export interface OrganisationRow {
  id: string;
  name: string;
  slug: string;
  plan_id: string;
  created_at: Date;
  updated_at: Date;
}

export interface Access {
  organisation: OrganisationRow;
  /** null when the caller is not a member (an operator looking in). */
  role: OrganisationRole | null;
}

export function organisationNotFound(id: string): ProblemError {
  return new ProblemError('organisation-not-found', 404, 'Organisation not found', `There is no organisation ${id} among yours. List yours with GET /v1/organisations.`);
}

export function forbidden(action: Action, role: OrganisationRole | null, extra = ''): ProblemError {
  const who = role ? `Your role in this organisation (${role})` : 'Looking in as an operator';
  return new ProblemError('forbidden', 403, 'Not allowed', `${who} does not allow this: ${describeAction(action)}.${extra ? ' ' + extra : ''} Ask an owner of the organisation.`, {
    action,
    role,
  });
}

export class AccessService {
  constructor(private readonly db: Knex) {}

  /** The organisation and the caller's role in it; 404 for outsiders. Does not check an action. */
  async resolve(actor: Actor, organisationId: string, db: Knex | Knex.Transaction = this.db): Promise<Access> {
    if (!isUuid(organisationId)) throw organisationNotFound(String(organisationId));
    const row = await db('organisations as o')
      .leftJoin('memberships as m', (j) => j.on('m.organisation_id', 'o.id').andOnVal('m.user_id', actor.userId))
      .where('o.id', organisationId)
      .first('o.*', 'm.role as member_role');
    if (!row) throw organisationNotFound(organisationId);
    const { member_role: role, ...organisation } = row as OrganisationRow & { member_role: OrganisationRole | null };
    if (!role && actor.platformRole !== 'operator') throw organisationNotFound(organisationId);
    return { organisation, role: role ?? null };
  }

  /** resolve() and then the action: 403 with the action and role named when not allowed. */
  async require(actor: Actor, organisationId: string, action: Action, db?: Knex | Knex.Transaction): Promise<Access> {
    const access = await this.resolve(actor, organisationId, db);
    if (!can(access.role, actor.platformRole, action)) throw forbidden(action, access.role);
    return access;
  }

  /** Platform actions (no organisation): only the platform role counts. */
  requirePlatform(actor: Actor, action: Action): void {
    if (!can(null, actor.platformRole, action)) {
      throw new ProblemError('forbidden', 403, 'Not allowed', `Only operators may do this: ${describeAction(action)}.`, { action, role: null });
    }
  }

  allows(access: Access, actor: Actor, action: Action): boolean {
    return can(access.role, actor.platformRole, action);
  }
}
