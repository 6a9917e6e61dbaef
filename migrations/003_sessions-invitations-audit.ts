/**
 * The people side (issue 6): one-time e-mail tokens (verification, password reset), sign-in
 * sessions with their rotating refresh tokens, invitations, the audit log, and in-place rotation of
 * API keys.
 *
 * Every secret that arrives by e-mail or cookie is stored only as its SHA-256 (hex): the tokens
 * are 256-bit random values, so a fast hash is enough and lookups stay one indexed equality.
 *
 * Sessions are refresh-token families: each refresh uses up one token and issues its child
 * (parent_id). Presenting a used token again means it was copied — the whole family is revoked.
 *
 * Also renames the createdAt/updatedAt columns that knex's timestamps(…, camelCase) gave users,
 * organisations and plans to created_at/updated_at, like every other table.
 *
 * API-key rotation keeps the key's public id (usage stays on one key) and replaces the secret; the
 * previous secret's hash stays valid until previous_secret_expires_at (the grace period, 24 h, see
 * gateway/keys/service.ts).
 */
import type { Knex } from 'knex';

/** Tables of 001/002 whose knex timestamps() came out camel-cased; every other table is snake_case. */
const CAMEL_TIMESTAMP_TABLES = ['users', 'organisations', 'plans'];

export async function up(knex: Knex) {
  for (const table of CAMEL_TIMESTAMP_TABLES) {
    await knex.schema.alterTable(table, (t) => {
      t.renameColumn('createdAt', 'created_at');
      t.renameColumn('updatedAt', 'updated_at');
    });
  }

  await knex.schema.createTable('email_tokens', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('purpose').notNullable().checkIn(['verify-email', 'reset-password']);
    t.text('token_hash').notNullable().unique();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('used_at', { useTz: true });
    t.index(['user_id', 'purpose']);
  });

  await knex.schema.createTable('sessions', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid()).comment('the refresh-token family id (sid claim of access tokens)');
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('last_refreshed_at', { useTz: true });
    t.timestamp('expires_at', { useTz: true }).notNullable().comment('absolute end, however often it is refreshed');
    t.timestamp('revoked_at', { useTz: true });
    t.text('revoked_reason').comment('sign-out | refresh-token-reuse | password-reset | password-changed | …');
    t.text('ip');
    t.text('user_agent');
    t.index(['user_id']);
  });

  await knex.schema.createTable('refresh_tokens', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('session_id').notNullable().references('sessions.id').onDelete('CASCADE');
    t.uuid('parent_id').references('refresh_tokens.id').onDelete('SET NULL');
    t.text('token_hash').notNullable().unique();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('used_at', { useTz: true });
    t.timestamp('revoked_at', { useTz: true });
    t.index(['session_id']);
  });

  await knex.schema.createTable('invitations', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('email').notNullable();
    t.text('role').notNullable().checkIn(['owner', 'maintainer', 'developer', 'viewer']);
    t.text('token_hash').notNullable().unique();
    t.uuid('invited_by').references('users.id').onDelete('SET NULL');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('accepted_at', { useTz: true });
    t.uuid('accepted_by').references('users.id').onDelete('SET NULL');
    t.timestamp('revoked_at', { useTz: true });
    t.index(['organisation_id', 'created_at']);
  });
  // at most one open invitation per organisation and address (a new one replaces the old)
  await knex.raw(
    'CREATE UNIQUE INDEX invitations_open_unique ON invitations (organisation_id, lower(email)) WHERE accepted_at IS NULL AND revoked_at IS NULL',
  );

  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id').primary();
    // no foreign key: the record of an organisation outlives it (e.g. "organisation.deleted")
    t.uuid('organisation_id').comment('null for account-level events (sign-in, password changes)');
    t.uuid('actor_user_id').references('users.id').onDelete('SET NULL');
    t.text('actor_email').comment('as it was when the action happened');
    t.text('action').notNullable();
    t.text('target_type');
    t.text('target_id');
    t.jsonb('details').notNullable().defaultTo('{}');
    t.text('ip');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
  await knex.raw('CREATE INDEX audit_log_org_time ON audit_log (organisation_id, created_at DESC, id DESC)');
  await knex.raw('CREATE INDEX audit_log_org_action_time ON audit_log (organisation_id, action, created_at DESC)');
  await knex.raw('CREATE INDEX audit_log_actor_time ON audit_log (actor_user_id, created_at DESC)');
  await knex.raw(
    "CREATE INDEX audit_log_account_events ON audit_log (target_id, created_at DESC) WHERE organisation_id IS NULL AND target_type = 'user'",
  );

  await knex.schema.alterTable('api_keys', (t) => {
    t.timestamp('rotated_at', { useTz: true });
    t.text('previous_secret_hash').comment('the secret before the last rotation, valid until previous_secret_expires_at');
    t.timestamp('previous_secret_expires_at', { useTz: true });
  });
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('api_keys', (t) => {
    t.dropColumn('previous_secret_expires_at');
    t.dropColumn('previous_secret_hash');
    t.dropColumn('rotated_at');
  });
  await knex.schema.dropTable('audit_log');
  await knex.schema.dropTable('invitations');
  await knex.schema.dropTable('refresh_tokens');
  await knex.schema.dropTable('sessions');
  await knex.schema.dropTable('email_tokens');
  for (const table of CAMEL_TIMESTAMP_TABLES) {
    await knex.schema.alterTable(table, (t) => {
      t.renameColumn('created_at', 'createdAt');
      t.renameColumn('updated_at', 'updatedAt');
    });
  }
}
