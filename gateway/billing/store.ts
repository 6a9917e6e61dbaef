/**
 * Billing SQL (knex, bindings only): plans with their provider ids, the organisation's customer,
 * subscription and invoices, processed webhook events and quota-mail marks. No rules here; the
 * service decides.
 */
import type { Knex } from 'knex';
import type { PlanRow } from '../plans/store.js';

type Db = Knex | Knex.Transaction;

export type BillingPlanRow = PlanRow & { sort: number; provider_product_id: string | null; provider_price_id: string | null };

export interface CustomerRow {
  organisation_id: string;
  provider_customer_id: string;
  card_source_id: string | null;
  card_brand: string | null;
  card_last4: string | null;
  card_exp_month: number | null;
  card_exp_year: number | null;
  updated_at: Date;
}

export interface SubscriptionRow {
  organisation_id: string;
  plan_id: string;
  provider_subscription_id: string | null;
  provider_item_id: string | null;
  status: string;
  current_period_start: Date;
  current_period_end: Date;
  scheduled_plan_id: string | null;
  cancel_at_period_end: boolean;
  last_event_created: string | number | null;
  created_at: Date;
  updated_at: Date;
}

export interface InvoiceRow {
  id: string;
  organisation_id: string;
  number: string;
  source: 'provider' | 'fermiwell';
  provider_invoice_id: string | null;
  provider_charge_id: string | null;
  plan_id: string | null;
  description: string;
  amount_cents: number;
  currency: string;
  status: string;
  period_start: Date | null;
  period_end: Date | null;
  paid_at: Date | null;
  created_at: Date;
}

export type NewInvoice = Omit<InvoiceRow, 'id' | 'created_at' | 'number'> & { number?: string };

export async function plans(db: Db): Promise<BillingPlanRow[]> {
  return db('plans').select('*').orderBy('sort');
}

export async function plan(db: Db, id: string): Promise<BillingPlanRow | undefined> {
  return db('plans').where({ id }).first();
}

export async function setPlanProviderIds(db: Db, id: string, productId: string, priceId: string): Promise<void> {
  await db('plans').where({ id }).update({ provider_product_id: productId, provider_price_id: priceId, updated_at: db.fn.now() });
}

export async function planByPrice(db: Db, priceId: string): Promise<BillingPlanRow | undefined> {
  return db('plans').where({ provider_price_id: priceId }).first();
}

/** The organisation row locked for the rest of the transaction (serialises plan changes across instances). */
export async function lockOrganisation(trx: Knex.Transaction, organisationId: string): Promise<{ id: string; name: string; plan_id: string } | undefined> {
  return trx('organisations').where({ id: organisationId }).forNoKeyUpdate().first('id', 'name', 'plan_id');
}

export async function setOrganisationPlan(db: Db, organisationId: string, planId: string): Promise<void> {
  await db('organisations').where({ id: organisationId }).update({ plan_id: planId, updated_at: db.fn.now() });
}

export async function customer(db: Db, organisationId: string): Promise<CustomerRow | undefined> {
  return db('billing_customers').where({ organisation_id: organisationId }).first();
}

export async function organisationOfCustomer(db: Db, providerCustomerId: string): Promise<string | undefined> {
  return (await db('billing_customers').where({ provider_customer_id: providerCustomerId }).first('organisation_id'))?.organisation_id;
}

export async function saveCustomer(db: Db, organisationId: string, providerCustomerId: string): Promise<void> {
  await db('billing_customers')
    .insert({ organisation_id: organisationId, provider_customer_id: providerCustomerId })
    .onConflict('organisation_id')
    .merge({ provider_customer_id: providerCustomerId, card_source_id: null, card_brand: null, card_last4: null, card_exp_month: null, card_exp_year: null, updated_at: db.fn.now() });
}

export async function saveCard(db: Db, organisationId: string, card: { sourceId: string; brand: string; last4: string; expMonth: number; expYear: number }): Promise<void> {
  await db('billing_customers').where({ organisation_id: organisationId }).update({
    card_source_id: card.sourceId,
    card_brand: card.brand,
    card_last4: card.last4,
    card_exp_month: card.expMonth,
    card_exp_year: card.expYear,
    updated_at: db.fn.now(),
  });
}

export async function subscription(db: Db, organisationId: string): Promise<SubscriptionRow | undefined> {
  return db('subscriptions').where({ organisation_id: organisationId }).first();
}

export async function subscriptionByProviderId(db: Db, providerSubscriptionId: string): Promise<SubscriptionRow | undefined> {
  return db('subscriptions').where({ provider_subscription_id: providerSubscriptionId }).first();
}

export async function saveSubscription(db: Db, row: Omit<SubscriptionRow, 'created_at' | 'updated_at' | 'last_event_created'> & { last_event_created?: number | null }): Promise<void> {
  const { organisation_id, ...rest } = row;
  await db('subscriptions')
    .insert({ organisation_id, ...rest })
    .onConflict('organisation_id')
    .merge({ ...rest, updated_at: db.fn.now() });
}

export async function updateSubscription(db: Db, organisationId: string, changes: Partial<Omit<SubscriptionRow, 'organisation_id' | 'created_at' | 'updated_at'>>): Promise<void> {
  await db('subscriptions').where({ organisation_id: organisationId }).update({ ...changes, updated_at: db.fn.now() });
}

export async function deleteSubscription(db: Db, organisationId: string): Promise<void> {
  await db('subscriptions').where({ organisation_id: organisationId }).delete();
}

/** Subscriptions whose scheduled change (downgrade, cancel) fell due. */
export async function dueChanges(db: Db, now: Date, organisationId?: string): Promise<SubscriptionRow[]> {
  const q = db('subscriptions').where('current_period_end', '<=', now).andWhere((w) => w.whereNotNull('scheduled_plan_id').orWhere('cancel_at_period_end', true));
  if (organisationId) q.andWhere({ organisation_id: organisationId });
  return q.select('*');
}

export async function invoices(db: Db, organisationId: string, limit = 100): Promise<InvoiceRow[]> {
  return db('invoices').where({ organisation_id: organisationId }).orderBy('created_at', 'desc').orderBy('number', 'desc').limit(limit);
}

export async function invoice(db: Db, organisationId: string, id: string): Promise<InvoiceRow | undefined> {
  return db('invoices').where({ organisation_id: organisationId, id }).first();
}

export async function invoiceByProviderId(db: Db, providerInvoiceId: string): Promise<InvoiceRow | undefined> {
  return db('invoices').where({ provider_invoice_id: providerInvoiceId }).first();
}

/** Inserts an invoice, numbered FW-<slug>-<NNNN> per organisation unless a number is given. */
export async function insertInvoice(trx: Knex.Transaction, invoice: NewInvoice): Promise<InvoiceRow> {
  let number = invoice.number;
  if (!number) {
    const org = await trx('organisations').where({ id: invoice.organisation_id }).first('slug');
    const count = await trx('invoices').where({ organisation_id: invoice.organisation_id }).count<{ n: string }[]>({ n: '*' });
    number = `FW-${String(org?.slug ?? 'org').toUpperCase().slice(0, 12)}-${String(Number(count[0]?.n ?? 0) + 1).padStart(4, '0')}`;
  }
  const [row] = await trx('invoices').insert({ ...invoice, number }).returning('*');
  return row as InvoiceRow;
}

export async function updateInvoice(db: Db, id: string, changes: Partial<Pick<InvoiceRow, 'status' | 'paid_at' | 'amount_cents' | 'provider_charge_id'>>): Promise<void> {
  await db('invoices').where({ id }).update(changes);
}

/** Records a provider event as handled; false when it was already (the same event twice changes nothing). */
export async function claimEvent(trx: Knex.Transaction, event: { id: string; type: string; organisationId: string | null; outcome: string }): Promise<boolean> {
  const inserted = await trx('billing_events')
    .insert({ provider_event_id: event.id, type: event.type, organisation_id: event.organisationId, outcome: event.outcome })
    .onConflict('provider_event_id')
    .ignore()
    .returning('provider_event_id');
  return inserted.length > 0;
}

/** The owners' addresses and names (billing mail goes to them). */
export async function owners(db: Db, organisationId: string): Promise<Array<{ email: string; display_name: string }>> {
  return db('memberships as m').join('users as u', 'u.id', 'm.user_id').where({ 'm.organisation_id': organisationId, 'm.role': 'owner' }).select('u.email', 'u.display_name');
}

/** Marks a quota threshold as mailed for the period; false when it already was (by any instance). */
export async function claimQuotaMail(db: Db, organisationId: string, periodStart: Date, thresholdPercent: number): Promise<boolean> {
  const inserted = await db('quota_mail_marks')
    .insert({ organisation_id: organisationId, period_start: periodStart, threshold_percent: thresholdPercent })
    .onConflict(['organisation_id', 'period_start', 'threshold_percent'])
    .ignore()
    .returning('threshold_percent');
  return inserted.length > 0;
}

export async function organisationName(db: Db, organisationId: string): Promise<string | undefined> {
  return (await db('organisations').where({ id: organisationId }).first('name'))?.name;
}
