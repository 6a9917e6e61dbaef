/**
 * Seeds the demo group's audit log and one pending invitation (DESIGN.md §8; all invented).
 * Idempotent: does nothing once the demo organisation has audit entries.
 */
import type { Knex } from 'knex';
import { createHash, randomBytes } from 'node:crypto';
import { DEMO_KEYS, DEMO_ORGANISATION, DEMO_USERS, demoAgo } from './demo-accounts.js';

/** The invented person invited to the demo group; nobody can accept (the token is thrown away). */
export const DEMO_INVITATION = { email: 'elowen.hartigan@pellworth.example', role: 'developer' } as const;

export async function seed(knex: Knex) {
  const org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first();
  if (!org) return;
  if (await knex('audit_log').where({ organisation_id: org.id }).first('id')) return;

  const user = async (email: string) => knex('users').whereRaw('lower(email) = lower(?)', [email]).first();
  const owner = await user('imogen.thursby@harrowgate.example');
  const maintainer = await user('tobias.renwick@harrowgate.example');
  const developer = await user('mira.castellane@harrowgate.example');
  const viewer = await user('jonah.peverell@harrowgate.example');
  if (!owner || !maintainer || !developer || !viewer) return;

  const ago = (days: number, hours = 0) => demoAgo(knex, [days, hours]);
  const entry = (at: Knex.Raw, actor: { id: string; email: string } | null, action: string, target: { type: string; id: string } | null, details: object, organisation = true) => ({
    organisation_id: organisation ? org.id : null,
    actor_user_id: actor?.id ?? null,
    actor_email: actor?.email ?? null,
    action,
    target_type: target?.type ?? null,
    target_id: target?.id ?? null,
    details: JSON.stringify(details),
    ip: '192.0.2.14', // documentation address range (RFC 5737)
    created_at: at,
  });
  const asUser = (u: { id: string }) => ({ type: 'user', id: u.id });
  // the membership rows (001) carry the same times
  const joined = (u: { email: string }) => ago(...DEMO_USERS.find((d) => d.email === u.email)!.joinedAgo);

  await knex('audit_log').insert([
    entry(joined(owner), owner, 'organisation.created', { type: 'organisation', id: org.id }, { name: org.name }),
    entry(ago(61, -1), owner, 'invitation.created', null, { email: maintainer.email, role: 'maintainer' }),
    entry(joined(maintainer), maintainer, 'member.joined', asUser(maintainer), { role: 'maintainer' }),
    entry(ago(...DEMO_KEYS[0].createdAgo), maintainer, 'key.created', { type: 'api_key', id: DEMO_KEYS[0].id }, { name: DEMO_KEYS[0].name, scopes: DEMO_KEYS[0].scopes }),
    entry(joined(developer), developer, 'member.joined', asUser(developer), { role: 'developer' }),
    entry(ago(...DEMO_KEYS[1].createdAgo), developer, 'key.created', { type: 'api_key', id: DEMO_KEYS[1].id }, { name: DEMO_KEYS[1].name, scopes: DEMO_KEYS[1].scopes }),
    // joined as a developer, made a viewer later: the log tells how the current role came about
    entry(joined(viewer), viewer, 'member.joined', asUser(viewer), { role: 'developer' }),
    entry(ago(30, 5), owner, 'member.role-changed', asUser(viewer), { from: 'developer', to: 'viewer' }),
    entry(ago(12, 3), null, 'auth.sign-in-failed', asUser(developer), { reason: 'wrong-password' }, false),
    entry(ago(12, 3), developer, 'auth.sign-in', asUser(developer), {}, false),
    entry(ago(3, 6), maintainer, 'invitation.created', null, { email: DEMO_INVITATION.email, role: DEMO_INVITATION.role }),
    entry(ago(1, 2), owner, 'auth.sign-in', asUser(owner), {}, false),
  ]);

  const pending = await knex('invitations').where({ organisation_id: org.id }).whereRaw('lower(email) = lower(?)', [DEMO_INVITATION.email]).first('id');
  if (!pending) {
    await knex('invitations').insert({
      organisation_id: org.id,
      email: DEMO_INVITATION.email,
      role: DEMO_INVITATION.role,
      // a random token nobody keeps: the demo shows a pending invitation, nobody can accept it
      token_hash: createHash('sha256').update(randomBytes(32).toString('base64url')).digest('hex'),
      invited_by: maintainer.id,
      created_at: ago(3, 6),
      // valid INVITATION_TTL_DAYS (7 by default) from its creation, like one the gateway makes
      expires_at: ago(3 - 7, 6),
    });
  }
}
