/**
 * Per-organisation limit overrides set by an operator (the Operator page): a null column means
 * "the plan's value". Effective limits are COALESCE(override, plan) everywhere a limit is read
 * (gateway/operator/store.ts `effectiveLimitsSql`). One row per organisation at most; removing
 * every override deletes the row. Who set it, when and why is kept here and in the audit log.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.schema.createTable('organisation_limit_overrides', (t) => {
    t.uuid('organisation_id').primary().references('organisations.id').onDelete('CASCADE');
    t.bigInteger('points_per_month').comment('null = the plan value');
    t.integer('requests_per_second').comment('null = the plan value');
    t.integer('max_batch').comment('null = the plan value');
    t.integer('table_builds_per_month').comment('null = the plan value (see table_builds_unlimited)');
    t.boolean('table_builds_unlimited').notNullable().defaultTo(false).comment('true = no monthly table-build limit, whatever the plan');
    t.text('reason').notNullable();
    t.uuid('set_by').references('users.id').onDelete('SET NULL');
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTable('organisation_limit_overrides');
}
