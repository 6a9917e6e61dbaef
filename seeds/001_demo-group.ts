/**
 * Seeds the demo group and its people (DESIGN.md §8). Idempotent: rows that exist are left alone,
 * so a second `npm start` keeps whatever the demo users changed.
 */
import type { Knex } from 'knex';
import { hash } from '@node-rs/argon2';
import { DEMO_ORGANISATION, DEMO_USERS, demoAgo } from './demo-accounts.js';

export async function seed(knex: Knex) {
  const owner = DEMO_USERS.find((u) => u.role === 'owner')!;
  let org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first();
  if (!org) {
    [org] = await knex('organisations').insert({ name: DEMO_ORGANISATION.name, slug: DEMO_ORGANISATION.slug, created_at: demoAgo(knex, owner.joinedAgo) }).returning('*');
  }
  for (const user of DEMO_USERS) {
    let row = await knex('users').whereRaw('lower(email) = lower(?)', [user.email]).first();
    if (!row) {
      [row] = await knex('users')
        .insert({
          email: user.email,
          display_name: user.displayName,
          password_hash: await hash(user.password),
          email_verified_at: knex.fn.now(),
          platform_role: user.platformRole,
          created_at: demoAgo(knex, user.joinedAgo),
        })
        .returning('*');
    }
    if (user.role) {
      await knex('memberships')
        .insert({ user_id: row.id, organisation_id: org.id, role: user.role, created_at: demoAgo(knex, user.joinedAgo) })
        .onConflict(['user_id', 'organisation_id'])
        .ignore();
    }
  }
}
