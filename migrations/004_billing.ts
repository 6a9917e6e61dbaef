/**
 * Billing (issue 7, DESIGN.md §5, §6): the payment provider's products and prices mirrored on the
 * plans, a customer per organisation (with the card's brand and last four digits — never its
 * number), the organisation's subscription, invoices (mirrors of the provider's, or recorded by
 * Fermiwell itself where the provider has none: `source` says which), the webhook events already
 * applied (so a repeated event changes nothing), and the quota e-mails already sent per period.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.schema.alterTable('plans', (t) => {
    t.text('provider_product_id').comment('the payment provider product of this plan (set at gateway start)');
    t.text('provider_price_id').comment('its monthly price');
  });

  await knex.schema.createTable('billing_customers', (t) => {
    t.uuid('organisation_id').primary().references('organisations.id').onDelete('CASCADE');
    t.text('provider_customer_id').notNullable().unique();
    t.text('card_source_id').comment('the provider id of the default card; null = no card on file');
    t.text('card_brand');
    t.text('card_last4').comment('the last four digits only; card numbers are never stored');
    t.integer('card_exp_month');
    t.integer('card_exp_year');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable('subscriptions', (t) => {
    t.uuid('organisation_id').primary().references('organisations.id').onDelete('CASCADE');
    t.text('plan_id').notNullable().references('plans.id').comment('the plan paid for in the current period');
    t.text('provider_subscription_id').unique().comment('null: no live subscription at the provider (e.g. seeded demo data)');
    t.text('provider_item_id');
    t.text('status').notNullable().comment('active, past_due, canceled, …  (the provider statuses)');
    t.timestamp('current_period_start', { useTz: true }).notNullable();
    t.timestamp('current_period_end', { useTz: true }).notNullable();
    t.text('scheduled_plan_id').references('plans.id').comment('plan that takes over at current_period_end (downgrade or cancel = free)');
    t.boolean('cancel_at_period_end').notNullable().defaultTo(false);
    t.bigInteger('last_event_created').comment('created time (s) of the newest provider event applied; older ones are ignored');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['current_period_end']);
  });

  await knex.schema.createTable('invoices', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('number').notNullable();
    t.text('source').notNullable().comment("'provider': a mirror of the provider's invoice; 'fermiwell': recorded by Fermiwell from a subscription change the provider made no invoice for");
    t.text('provider_invoice_id').unique();
    t.text('provider_charge_id');
    t.text('plan_id').references('plans.id');
    t.text('description').notNullable();
    t.integer('amount_cents').notNullable();
    t.text('currency').notNullable();
    t.text('status').notNullable().comment('paid, open, void, uncollectible');
    t.timestamp('period_start', { useTz: true });
    t.timestamp('period_end', { useTz: true });
    t.timestamp('paid_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(['organisation_id', 'number']);
    t.index(['organisation_id', 'created_at']);
  });

  await knex.schema.createTable('billing_events', (t) => {
    t.text('provider_event_id').primary();
    t.text('type').notNullable();
    t.uuid('organisation_id').references('organisations.id').onDelete('SET NULL');
    t.text('outcome').notNullable().comment('applied, ignored (not ours / older than what we have), unknown-organisation');
    t.timestamp('received_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable('quota_mail_marks', (t) => {
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.timestamp('period_start', { useTz: true }).notNullable();
    t.integer('threshold_percent').notNullable().comment('80 or 100');
    t.timestamp('sent_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['organisation_id', 'period_start', 'threshold_percent']);
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTable('quota_mail_marks');
  await knex.schema.dropTable('billing_events');
  await knex.schema.dropTable('invoices');
  await knex.schema.dropTable('subscriptions');
  await knex.schema.dropTable('billing_customers');
  await knex.schema.alterTable('plans', (t) => {
    t.dropColumn('provider_product_id');
    t.dropColumn('provider_price_id');
  });
}
