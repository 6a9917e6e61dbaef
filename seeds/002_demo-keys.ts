/** Seeds the demo group's API keys (DESIGN.md §8). Idempotent. */
import type { Knex } from 'knex';
import { createHash } from 'node:crypto';
import { DEMO_KEYS, DEMO_ORGANISATION, demoAgo } from './demo-accounts.js';

export async function seed(knex: Knex) {
  const org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first();
  if (!org) return;
  for (const key of DEMO_KEYS) {
    const creator = await knex('users').whereRaw('lower(email) = lower(?)', [key.createdBy]).first();
    await knex('api_keys')
      .insert({
        id: key.id,
        organisation_id: org.id,
        name: key.name,
        // the same hash the gateway uses (gateway/keys/token.ts): SHA-256 hex of the secret
        secret_hash: createHash('sha256').update(key.secret, 'utf8').digest('hex'),
        scopes: [...key.scopes],
        created_by: creator?.id ?? null,
        // (days, hours) before the seeding, as the audit log's key.created entries (003)
        created_at: demoAgo(knex, key.createdAgo),
      })
      .onConflict('id')
      .ignore();
  }
}
