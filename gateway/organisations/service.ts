/**
 * Organisations, memberships and invitations, with the role × action matrix checked here (through
 * AccessService) so every caller — REST, GraphQL, later features — gets the same rules.
 *
 * Rules beyond the matrix:
 * - whoever creates an organisation is its first owner;
 * - an organisation always keeps at least one owner: the last owner can neither leave, be removed
 *   nor be given another role (checked with the memberships locked, so two owners demoting each
 *   other at once cannot both succeed);
 * - any member may leave by removing themselves (members.manage is for removing others);
 * - an invitation is for one address and one role, valid INVITATION_TTL_DAYS, accepted once, by
 *   the person signed in with that address or by someone signing up with it on the way; inviting
 *   an address again replaces its open invitation.
 */
import type { Knex } from 'knex';
import type { Config } from '../config.js';
import type { AuditFilter, AuditLog, AuditPage } from '../audit/service.js';
import type { Mailer } from '../mail/mailer.js';
import { invitationMail } from '../mail/messages.js';
import { ProblemError } from '../shared/problem.js';
import { allowedActions, inviteAction, type Action, type OrganisationRole } from '../shared/roles.js';
import { isUuid } from '../shared/validate.js';
import { hashPassword } from '../auth/passwords.js';
import * as users from '../auth/store.js';
import { publicUser, type PublicUser } from '../auth/service.js';
import { hashToken, newOpaqueToken } from '../auth/tokens.js';
import type { KeyService } from '../keys/service.js';
import { forbidden, type Access, type AccessService, type Actor, type OrganisationRow } from './access.js';
import * as store from './store.js';

export interface OrganisationView {
  id: string;
  name: string;
  slug: string;
  plan: string;
  createdAt: string;
  memberCount: number;
  /** The caller's role; null for an operator who is not a member. */
  role: OrganisationRole | null;
}

export interface MemberView {
  user: { id: string; email: string; displayName: string };
  role: OrganisationRole;
  joinedAt: string;
}

export interface InvitationView {
  id: string;
  email: string;
  role: OrganisationRole;
  invitedBy: { id: string; displayName: string; email: string } | null;
  createdAt: string;
  expiresAt: string;
  state: 'pending' | 'expired';
}

export interface InvitationPreview {
  organisation: { id: string; name: string };
  email: string;
  role: OrganisationRole;
  invitedBy: { displayName: string } | null;
  expiresAt: string;
  /** Whether an account with this address exists: sign in to accept, or sign up on the way. */
  accountExists: boolean;
}

function view(row: OrganisationRow & { member_count?: string | number }, role: OrganisationRole | null): OrganisationView {
  return {
    id: row.id,
    name: row.name,
    slug: row.slug,
    plan: row.plan_id,
    createdAt: new Date(row.created_at).toISOString(),
    memberCount: Number(row.member_count ?? 0),
    role,
  };
}

function memberView(row: store.MemberRow): MemberView {
  return { user: { id: row.user_id, email: row.email, displayName: row.display_name }, role: row.role, joinedAt: new Date(row.created_at).toISOString() };
}

function invitationView(row: store.InvitationRow): InvitationView {
  return {
    id: row.id,
    email: row.email,
    role: row.role,
    invitedBy: row.invited_by ? { id: row.invited_by, displayName: row.inviter_name ?? '', email: row.inviter_email ?? '' } : null,
    createdAt: new Date(row.created_at).toISOString(),
    expiresAt: new Date(row.expires_at).toISOString(),
    state: new Date(row.expires_at).getTime() <= Date.now() ? 'expired' : 'pending',
  };
}

function slugify(name: string): string {
  const base = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40);
  return base || 'organisation';
}

const lastOwner = () =>
  new ProblemError('last-owner', 409, 'An organisation needs an owner', 'This is the only owner of the organisation. Make another member an owner first, or delete the organisation.');

export type AcceptAs = { actor: Actor } | { newAccount: { displayName: string; password: string } };

export class OrganisationService {
  private readonly publicUrl: string;

  constructor(
    private readonly db: Knex,
    private readonly config: Config,
    private readonly access: AccessService,
    private readonly audit: AuditLog,
    private readonly mailer: Mailer,
    private readonly keys: KeyService,
  ) {
    this.publicUrl = config.PUBLIC_URL.replace(/\/+$/, '');
  }

  // ── the caller ──

  async me(actor: Actor): Promise<{ user: PublicUser; organisations: OrganisationView[] }> {
    const user = await users.findUserById(this.db, actor.userId);
    const rows = await store.listForUser(this.db, actor.userId);
    return { user: publicUser(user!), organisations: rows.map((r) => view(r, r.role)) };
  }

  async listMine(actor: Actor): Promise<OrganisationView[]> {
    return (await store.listForUser(this.db, actor.userId)).map((r) => view(r, r.role));
  }

  async listAll(actor: Actor): Promise<OrganisationView[]> {
    this.access.requirePlatform(actor, 'organisations.list-all');
    return (await store.listAll(this.db, actor.userId)).map((r) => view(r, r.role));
  }

  // ── organisations ──

  async create(actor: Actor, name: string): Promise<OrganisationView> {
    return this.db.transaction(async (trx) => {
      let slug = slugify(name);
      // the insert itself claims the slug: a check before it raced with a concurrent creation of
      // the same slug (a 500 on the unique index, found by the route fuzzer)
      let org: OrganisationRow | undefined;
      while (!(org = await store.insertOrganisationIfSlugFree(trx, { name, slug }))) slug = `${slugify(name).slice(0, 33)}-${newOpaqueToken().slice(0, 6).toLowerCase().replace(/[^a-z0-9]/g, 'x')}`;
      await trx('memberships').insert({ user_id: actor.userId, organisation_id: org.id, role: 'owner' });
      await this.audit.record({ organisationId: org.id, actor, action: 'organisation.created', target: { type: 'organisation', id: org.id }, details: { name }, ip: actor.ip ?? null }, trx);
      return view({ ...org, member_count: 1 }, 'owner');
    });
  }

  async get(actor: Actor, organisationId: string): Promise<OrganisationView & { permissions: Action[] }> {
    const { organisation, role } = await this.access.require(actor, organisationId, 'organisation.read');
    const count = await this.db('memberships').where({ organisation_id: organisationId }).count<{ count: string }[]>({ count: '*' });
    return { ...view({ ...organisation, member_count: count[0]?.count ?? 0 }, role), permissions: allowedActions(role, actor.platformRole) };
  }

  async permissions(actor: Actor, organisationId: string): Promise<{ role: OrganisationRole | null; platformRole: 'operator' | null; actions: Action[] }> {
    const { role } = await this.access.require(actor, organisationId, 'organisation.read');
    return { role, platformRole: actor.platformRole, actions: allowedActions(role, actor.platformRole) };
  }

  async rename(actor: Actor, organisationId: string, name: string): Promise<OrganisationView> {
    return this.db.transaction(async (trx) => {
      const { organisation, role } = await this.access.require(actor, organisationId, 'organisation.rename', trx);
      const [row] = await trx('organisations').where({ id: organisationId }).update({ name, updated_at: trx.fn.now() }).returning('*');
      await this.audit.record({ organisationId, actor, action: 'organisation.renamed', target: { type: 'organisation', id: organisationId }, details: { from: organisation.name, to: name }, ip: actor.ip ?? null }, trx);
      const count = await trx('memberships').where({ organisation_id: organisationId }).count<{ count: string }[]>({ count: '*' });
      return view({ ...(row as OrganisationRow), member_count: count[0]?.count ?? 0 }, role);
    });
  }

  /** Deletes the organisation with its memberships, invitations, keys and usage. The audit log keeps the record. */
  /** Steps other features take inside an organisation's deletion, before its rows go (billing ends the subscription). */
  private readonly deletionSteps: Array<(organisationId: string, trx: Knex.Transaction) => Promise<void>> = [];

  beforeDelete(step: (organisationId: string, trx: Knex.Transaction) => Promise<void>): void {
    this.deletionSteps.push(step);
  }

  async delete(actor: Actor, organisationId: string): Promise<void> {
    await this.db.transaction(async (trx) => {
      const { organisation } = await this.access.require(actor, organisationId, 'organisation.delete', trx);
      for (const step of this.deletionSteps) await step(organisationId, trx);
      await this.audit.record({ organisationId, actor, action: 'organisation.deleted', target: { type: 'organisation', id: organisationId }, details: { name: organisation.name, slug: organisation.slug }, ip: actor.ip ?? null }, trx);
      await trx('organisations').where({ id: organisationId }).delete();
    });
    this.keys.invalidateOrganisation(organisationId);
  }

  // ── members ──

  async members(actor: Actor, organisationId: string): Promise<MemberView[]> {
    await this.access.require(actor, organisationId, 'members.read');
    return (await store.members(this.db, organisationId)).map(memberView);
  }

  async changeRole(actor: Actor, organisationId: string, userId: string, role: OrganisationRole): Promise<MemberView> {
    return this.db.transaction(async (trx) => {
      await this.access.require(actor, organisationId, 'members.manage', trx);
      const locked = await store.lockMembers(trx, organisationId);
      const target = isUuid(userId) ? locked.find((m) => m.user_id === userId) : undefined;
      if (!target) throw memberNotFound(userId);
      if (target.role === 'owner' && role !== 'owner' && locked.filter((m) => m.role === 'owner').length <= 1) throw lastOwner();
      if (target.role !== role) {
        await trx('memberships').where({ organisation_id: organisationId, user_id: userId }).update({ role });
        await this.audit.record({ organisationId, actor, action: 'member.role-changed', target: { type: 'user', id: userId }, details: { from: target.role, to: role }, ip: actor.ip ?? null }, trx);
      }
      const row = (await store.members(trx, organisationId)).find((m) => m.user_id === userId)!;
      return memberView(row);
    });
  }

  /** Removes a member, or lets the caller leave (userId = the caller). */
  async removeMember(actor: Actor, organisationId: string, userId: string): Promise<void> {
    const leaving = userId === actor.userId;
    await this.db.transaction(async (trx) => {
      const access = await this.access.resolve(actor, organisationId, trx);
      if (!leaving && !this.access.allows(access, actor, 'members.manage')) throw forbidden('members.manage', access.role);
      const locked = await store.lockMembers(trx, organisationId);
      const target = isUuid(userId) ? locked.find((m) => m.user_id === userId) : undefined;
      if (!target) throw memberNotFound(userId);
      if (target.role === 'owner' && locked.filter((m) => m.role === 'owner').length <= 1) throw lastOwner();
      await trx('memberships').where({ organisation_id: organisationId, user_id: userId }).delete();
      await this.audit.record(
        { organisationId, actor, action: leaving ? 'member.left' : 'member.removed', target: { type: 'user', id: userId }, details: { role: target.role }, ip: actor.ip ?? null },
        trx,
      );
    });
  }

  // ── invitations ──

  async invitations(actor: Actor, organisationId: string): Promise<InvitationView[]> {
    await this.access.require(actor, organisationId, 'invitations.read');
    return (await store.openInvitations(this.db, organisationId)).map(invitationView);
  }

  async invite(actor: Actor, organisationId: string, email: string, role: OrganisationRole): Promise<InvitationView> {
    const address = users.normaliseEmail(email);
    const token = newOpaqueToken();
    const expiresAt = new Date(Date.now() + this.config.INVITATION_TTL_DAYS * 86_400_000);
    const { invitation, organisation } = await this.db.transaction(async (trx) => {
      const { organisation } = await this.access.require(actor, organisationId, inviteAction(role), trx);
      const member = await trx('memberships as m').join('users as u', 'u.id', 'm.user_id').where('m.organisation_id', organisationId).whereRaw('lower(u.email) = lower(?)', [address]).first('u.id');
      if (member) throw new ProblemError('already-member', 409, 'Already a member', `${address} is already a member of this organisation. Change their role on the Team page instead.`);
      const replaced: Array<{ id: string }> = await trx('invitations')
        .where({ organisation_id: organisationId })
        .whereRaw('lower(email) = lower(?)', [address])
        .whereNull('accepted_at')
        .whereNull('revoked_at')
        .update({ revoked_at: trx.fn.now() })
        .returning('id');
      const [row] = await trx('invitations')
        .insert({ organisation_id: organisationId, email: address, role, token_hash: hashToken(token), invited_by: actor.userId, expires_at: expiresAt })
        .returning('*');
      await this.audit.record(
        { organisationId, actor, action: 'invitation.created', target: { type: 'invitation', id: row.id }, details: { email: address, role, ...(replaced.length ? { replaces: replaced.map((r) => r.id) } : {}) }, ip: actor.ip ?? null },
        trx,
      );
      return { invitation: row as store.InvitationRow, organisation };
    });
    this.mailer.send(
      address,
      invitationMail({ organisationName: organisation.name, inviterName: actor.displayName, role, link: `${this.publicUrl}/join#token=${encodeURIComponent(token)}`, expiresAt }),
    );
    return invitationView({ ...invitation, inviter_name: actor.displayName, inviter_email: actor.email });
  }

  async revokeInvitation(actor: Actor, organisationId: string, invitationId: string): Promise<void> {
    await this.db.transaction(async (trx) => {
      const access = await this.access.require(actor, organisationId, 'invitations.read', trx);
      const row: store.InvitationRow | undefined = isUuid(invitationId)
        ? await trx('invitations').where({ id: invitationId, organisation_id: organisationId }).whereNull('accepted_at').whereNull('revoked_at').forUpdate().first()
        : undefined;
      if (!row) throw new ProblemError('invitation-not-found', 404, 'Invitation not found', `There is no open invitation ${invitationId} in this organisation.`);
      if (!this.access.allows(access, actor, inviteAction(row.role))) throw forbidden(inviteAction(row.role), access.role);
      await trx('invitations').where({ id: row.id }).update({ revoked_at: trx.fn.now() });
      await this.audit.record({ organisationId, actor, action: 'invitation.revoked', target: { type: 'invitation', id: row.id }, details: { email: row.email, role: row.role }, ip: actor.ip ?? null }, trx);
    });
  }

  private async openInvitationByToken(db: Knex | Knex.Transaction, token: string, lock: boolean) {
    const query = db('invitations as i').join('organisations as o', 'o.id', 'i.organisation_id').leftJoin('users as u', 'u.id', 'i.invited_by').where('i.token_hash', hashToken(token));
    if (lock) query.forUpdate('i');
    const row = (await query.first('i.*', 'o.name as organisation_name', 'u.display_name as inviter_name')) as (store.InvitationRow & { organisation_name: string }) | undefined;
    if (!row || row.revoked_at) throw new ProblemError('invitation-not-found', 404, 'Invitation not valid', 'This invitation link is not valid or was withdrawn. Ask the person who invited you for a new one.');
    if (row.accepted_at) throw new ProblemError('invitation-used', 409, 'Invitation already accepted', 'This invitation was already accepted. Sign in to reach the organisation.');
    if (new Date(row.expires_at).getTime() <= Date.now()) throw new ProblemError('invitation-expired', 410, 'Invitation expired', 'This invitation has expired. Ask the person who invited you to send a new one.');
    return row;
  }

  /** What the invitation link is for (no sign-in needed: the token is the permission). */
  async previewInvitation(token: string): Promise<InvitationPreview> {
    const row = await this.openInvitationByToken(this.db, token, false);
    const account = await users.findUserByEmail(this.db, row.email);
    return {
      organisation: { id: row.organisation_id, name: row.organisation_name },
      email: row.email,
      role: row.role,
      invitedBy: row.inviter_name ? { displayName: row.inviter_name } : null,
      expiresAt: new Date(row.expires_at).toISOString(),
      accountExists: !!account,
    };
  }

  /**
   * Accepts an invitation, signed in (the account's address must be the invited one) or signed out
   * with a new account for the invited address (the link proves the mailbox, so the address counts
   * as confirmed). Returns the user who joined; the route opens a session for a new account.
   */
  async acceptInvitation(token: string, as: AcceptAs, ip: string | null): Promise<{ organisation: OrganisationView; user: users.UserRow; createdAccount: boolean }> {
    const passwordHash = 'newAccount' in as ? await hashPassword(as.newAccount.password) : null;
    return this.db.transaction(async (trx) => {
      const invitation = await this.openInvitationByToken(trx, token, true);
      let user: users.UserRow;
      let createdAccount = false;
      if ('actor' in as) {
        user = (await users.findUserById(trx, as.actor.userId))!;
        if (user.email.toLowerCase() !== invitation.email.toLowerCase()) {
          throw new ProblemError('invitation-email-mismatch', 403, 'Invitation is for another address', `This invitation was sent to ${invitation.email}, but you are signed in as ${user.email}. Sign in with the invited address, or ask for an invitation to yours.`);
        }
        const already = await trx('memberships').where({ organisation_id: invitation.organisation_id, user_id: user.id }).first('role');
        if (already) throw new ProblemError('already-member', 409, 'Already a member', 'You are already a member of this organisation.');
      } else {
        const existing = await users.findUserByEmail(trx, invitation.email);
        if (existing) {
          throw new ProblemError('sign-in-required', 401, 'Sign in to accept', `An account for ${invitation.email} exists. Sign in with it, then accept the invitation.`);
        }
        user = await users.insertUser(trx, { email: invitation.email, display_name: as.newAccount.displayName, password_hash: passwordHash!, email_verified_at: trx.fn.now() });
        createdAccount = true;
        await this.audit.record({ action: 'user.signed-up', actor: { userId: user.id, email: user.email }, target: { type: 'user', id: user.id }, details: { viaInvitation: invitation.id }, ip }, trx);
      }
      await trx('memberships').insert({ user_id: user.id, organisation_id: invitation.organisation_id, role: invitation.role });
      await trx('invitations').where({ id: invitation.id }).update({ accepted_at: trx.fn.now(), accepted_by: user.id });
      const actor = { userId: user.id, email: user.email };
      await this.audit.record({ organisationId: invitation.organisation_id, actor, action: 'invitation.accepted', target: { type: 'invitation', id: invitation.id }, details: { role: invitation.role }, ip }, trx);
      await this.audit.record({ organisationId: invitation.organisation_id, actor, action: 'member.joined', target: { type: 'user', id: user.id }, details: { role: invitation.role }, ip }, trx);
      const org = (await trx('organisations').where({ id: invitation.organisation_id }).first()) as OrganisationRow;
      const count = await trx('memberships').where({ organisation_id: org.id }).count<{ count: string }[]>({ count: '*' });
      return { organisation: view({ ...org, member_count: count[0]?.count ?? 0 }, invitation.role), user, createdAccount };
    });
  }

  // ── audit log ──

  async auditLog(actor: Actor, organisationId: string, filter: AuditFilter): Promise<AuditPage> {
    await this.access.require(actor, organisationId, 'audit.read');
    return this.audit.page(organisationId, filter);
  }

  /** For features that only need the check (mixtures, jobs, billing …). */
  require(actor: Actor, organisationId: string, action: Action): Promise<Access> {
    return this.access.require(actor, organisationId, action);
  }
}

function memberNotFound(userId: string) {
  return new ProblemError('member-not-found', 404, 'Member not found', `User ${userId} is not a member of this organisation.`);
}
