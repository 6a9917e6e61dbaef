/**
 * Users, organisations and memberships (DESIGN.md §5). E-mail is unique case-insensitively;
 * roles are the organisation roles of DESIGN.md §2, the platform role is separate on users.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.schema.createTable('users', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.text('email').notNullable();
    t.text('display_name').notNullable();
    t.text('password_hash').notNullable();
    t.timestamp('email_verified_at', { useTz: true });
    t.text('platform_role').checkIn(['operator']);
    t.timestamps(true, true, true);
  });
  await knex.raw('CREATE UNIQUE INDEX users_email_lower_unique ON users (lower(email))');

  await knex.schema.createTable('organisations', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.text('name').notNullable();
    t.text('slug').notNullable().unique();
    t.timestamps(true, true, true);
  });

  await knex.schema.createTable('memberships', (t) => {
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('role').notNullable().checkIn(['owner', 'maintainer', 'developer', 'viewer']);
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['user_id', 'organisation_id']);
    t.index(['organisation_id']);
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTable('memberships');
  await knex.schema.dropTable('organisations');
  await knex.schema.dropTable('users');
}
