/**
 * Plans (DESIGN.md §6) and the organisation's plan, API keys (DESIGN.md §2, §5), per-minute usage
 * aggregates, and the shared rate-limit windows every gateway instance counts in.
 */
import type { Knex } from 'knex';

export const PLAN_ROWS = [
  { id: 'free', name: 'Free', price_cents: 0, currency: 'usd', points_per_month: 2_000_000, requests_per_second: 10, max_batch: 10_000, table_builds_per_month: 1, sort: 1 },
  { id: 'group', name: 'Group', price_cents: 4_900, currency: 'usd', points_per_month: 500_000_000, requests_per_second: 100, max_batch: 1_000_000, table_builds_per_month: 20, sort: 2 },
  { id: 'facility', name: 'Facility', price_cents: 49_000, currency: 'usd', points_per_month: 20_000_000_000, requests_per_second: 1_000, max_batch: 5_000_000, table_builds_per_month: null, sort: 3 },
];

export async function up(knex: Knex) {
  await knex.schema.createTable('plans', (t) => {
    t.text('id').primary();
    t.text('name').notNullable();
    t.integer('price_cents').notNullable();
    t.text('currency').notNullable().defaultTo('usd');
    t.bigInteger('points_per_month').notNullable();
    t.integer('requests_per_second').notNullable();
    t.integer('max_batch').notNullable();
    t.integer('table_builds_per_month').comment('null = unlimited');
    t.integer('sort').notNullable().defaultTo(0);
    t.timestamps(true, true, true);
  });
  await knex('plans').insert(PLAN_ROWS);

  await knex.schema.alterTable('organisations', (t) => {
    t.text('plan_id').notNullable().defaultTo('free').references('plans.id');
  });

  await knex.schema.createTable('api_keys', (t) => {
    t.text('id').primary().comment('public 8-character id, the middle of fwk_<id>_<secret>');
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('name').notNullable();
    t.text('secret_hash').notNullable().comment('SHA-256 of the 32-character secret, hex');
    t.specificType('scopes', 'text[]').notNullable();
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('last_used_at', { useTz: true });
    t.timestamp('expires_at', { useTz: true });
    t.timestamp('revoked_at', { useTz: true });
    t.index(['organisation_id']);
  });

  await knex.schema.createTable('usage_minutes', (t) => {
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('api_key_id').notNullable().defaultTo('').comment("'' when not made with an API key");
    t.text('endpoint').notNullable();
    t.timestamp('minute', { useTz: true }).notNullable();
    t.integer('requests').notNullable().defaultTo(0);
    t.bigInteger('points').notNullable().defaultTo(0);
    t.integer('errors').notNullable().defaultTo(0);
    t.double('latency_ms_sum').notNullable().defaultTo(0);
    t.specificType('latency_buckets', 'integer[]').notNullable().comment('counts per bucket of usage/latency-buckets.ts');
    t.primary(['organisation_id', 'api_key_id', 'endpoint', 'minute']);
    t.index(['organisation_id', 'minute']);
  });

  await knex.schema.createTable('rate_limit_windows', (t) => {
    t.text('key').notNullable();
    t.bigInteger('window_start_ms').notNullable();
    t.integer('hits').notNullable();
    t.primary(['key', 'window_start_ms']);
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTable('rate_limit_windows');
  await knex.schema.dropTable('usage_minutes');
  await knex.schema.dropTable('api_keys');
  await knex.schema.alterTable('organisations', (t) => t.dropColumn('plan_id'));
  await knex.schema.dropTable('plans');
}
