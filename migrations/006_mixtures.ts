/**
 * Saved compositions of an organisation (DESIGN.md §5, §7 Mixtures), usable wherever a request takes
 * a composition: `{ "mixture": "<id>" }`. The nuclides are kept as a JSON list of
 * { nuclide, a, z, massFraction } whose fractions sum to 1 (checked by the service, not here).
 * Also the replay store of the Idempotency-Key header (DESIGN.md §4) for POSTs that create things.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.schema.createTable('mixtures', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('name').notNullable();
    t.text('description').notNullable().defaultTo('');
    t.jsonb('nuclides').notNullable().comment('[{ nuclide, a, z, massFraction }], fractions sum to 1');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(['organisation_id', 'name']);
  });

  await knex.schema.createTable('idempotency_keys', (t) => {
    t.text('scope').notNullable().comment('who sent it: user:<id> or key:<id>');
    t.text('key').notNullable().comment('the Idempotency-Key header value');
    t.text('method_path').notNullable();
    t.text('request_hash').notNullable().comment('SHA-256 of the request body');
    t.integer('status').comment('null while the first request is still running');
    t.jsonb('body').comment('the stored response body; null when it held a secret (never stored)');
    t.text('location');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['scope', 'key']);
    t.index(['created_at']);
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTable('idempotency_keys');
  await knex.schema.dropTable('mixtures');
}
