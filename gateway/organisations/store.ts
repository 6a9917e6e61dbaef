/** SQL for organisations, memberships and invitations (knex, bindings only). */
import type { Knex } from 'knex';
import type { OrganisationRole } from '../shared/roles.js';
import type { OrganisationRow } from './access.js';

export interface OrganisationWithRole extends OrganisationRow {
  role: OrganisationRole | null;
  member_count: string | number;
}

export function listForUser(db: Knex, userId: string): Promise<OrganisationWithRole[]> {
  return db('organisations as o')
    .join('memberships as m', 'm.organisation_id', 'o.id')
    .where('m.user_id', userId)
    .orderBy('o.name')
    .select('o.*', 'm.role', db.raw('(select count(*) from memberships x where x.organisation_id = o.id) as member_count'));
}

export function listAll(db: Knex, userId: string): Promise<OrganisationWithRole[]> {
  return db('organisations as o')
    .leftJoin('memberships as m', (j) => j.on('m.organisation_id', 'o.id').andOnVal('m.user_id', userId))
    .orderBy('o.name')
    .select('o.*', 'm.role', db.raw('(select count(*) from memberships x where x.organisation_id = o.id) as member_count'));
}

export async function insertOrganisation(db: Knex, row: { name: string; slug: string }): Promise<OrganisationRow> {
  const [inserted] = await db('organisations').insert(row).returning('*');
  return inserted as OrganisationRow;
}

/** Inserts the organisation unless its slug is taken (then undefined); waits for a concurrent insert of the same slug to decide. */
export async function insertOrganisationIfSlugFree(db: Knex, row: { name: string; slug: string }): Promise<OrganisationRow | undefined> {
  const [inserted] = await db('organisations').insert(row).onConflict('slug').ignore().returning('*');
  return inserted as OrganisationRow | undefined;
}

export async function slugTaken(db: Knex, slug: string): Promise<boolean> {
  return !!(await db('organisations').where({ slug }).first('id'));
}

export interface MemberRow {
  user_id: string;
  role: OrganisationRole;
  created_at: Date;
  email: string;
  display_name: string;
}

export function members(db: Knex, organisationId: string): Promise<MemberRow[]> {
  return db('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where('m.organisation_id', organisationId)
    .orderByRaw("array_position(array['owner','maintainer','developer','viewer'], m.role), lower(u.display_name)")
    .select('m.user_id', 'm.role', 'm.created_at', 'u.email', 'u.display_name');
}

/** Memberships of the organisation locked for the rest of the transaction (role changes, removals). */
export function lockMembers(trx: Knex.Transaction, organisationId: string): Promise<Array<{ user_id: string; role: OrganisationRole }>> {
  return trx('memberships').where({ organisation_id: organisationId }).forUpdate().select('user_id', 'role');
}

export interface InvitationRow {
  id: string;
  organisation_id: string;
  email: string;
  role: OrganisationRole;
  invited_by: string | null;
  created_at: Date;
  expires_at: Date;
  accepted_at: Date | null;
  revoked_at: Date | null;
  inviter_name?: string | null;
  inviter_email?: string | null;
}

export function openInvitations(db: Knex, organisationId: string): Promise<InvitationRow[]> {
  return db('invitations as i')
    .leftJoin('users as u', 'u.id', 'i.invited_by')
    .where('i.organisation_id', organisationId)
    .whereNull('i.accepted_at')
    .whereNull('i.revoked_at')
    .orderBy('i.created_at', 'desc')
    .select('i.*', 'u.display_name as inviter_name', 'u.email as inviter_email');
}
