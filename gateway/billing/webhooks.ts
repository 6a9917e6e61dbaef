/**
 * The payment provider's webhook events that change billing state, applied once each:
 *
 * - customer.subscription.created / updated: the subscription's status, period and cancellation
 *   flag are mirrored. A more expensive price applies at once; a cheaper one is scheduled for the
 *   period end; when the provider starts a new period, a scheduled plan takes over.
 * - customer.subscription.deleted: the organisation is back on Free at once.
 * - invoice.paid (and invoice.payment_succeeded): the invoice is mirrored as paid; receipt mail.
 * - invoice.payment_failed: the invoice is mirrored as open, the subscription past due; the owners
 *   get the payment-failure mail. The plan stays until the provider gives up (deleted).
 *
 * Idempotent: the event id is recorded in the same transaction as its effect, so the same event
 * twice changes nothing (and sends no second mail). Events older than the newest applied to a
 * subscription are recorded and ignored (the provider does not promise order). Unknown types and
 * events about customers Fermiwell does not know are recorded and answered 200, so the provider
 * stops retrying them.
 */
import type { Knex } from 'knex';
import type Stripe from 'stripe';
import type { Logger } from 'pino';
import type { KeyService } from '../keys/service.js';
import type { AuditLog } from '../audit/service.js';
import type { BillingService } from './service.js';
import * as store from './store.js';
import { subscriptionState, type ProviderSubscription } from './stripe-client.js';

export interface EventOutcome {
  eventId: string;
  type: string;
  /** true when this event had been handled before: nothing was changed this time. */
  duplicate: boolean;
  outcome: 'applied' | 'ignored' | 'unknown-organisation';
}

type Trx = Knex.Transaction;
type After = Array<() => Promise<void>>;

const SUBSCRIPTION_EVENTS = new Set(['customer.subscription.created', 'customer.subscription.updated', 'customer.subscription.deleted']);
const PAID_EVENTS = new Set(['invoice.paid', 'invoice.payment_succeeded']);

function customerId(value: string | { id: string } | null | undefined): string | null {
  if (!value) return null;
  return typeof value === 'string' ? value : value.id;
}

export class BillingWebhooks {
  constructor(
    private readonly db: Knex,
    private readonly billing: BillingService,
    private readonly keys: KeyService,
    private readonly audit: AuditLog,
    private readonly logger: Logger,
  ) {}

  async handle(event: Stripe.Event): Promise<EventOutcome> {
    const after: After = [];
    let invalidate: string | null = null;
    const result = await this.db.transaction(async (trx) => {
      const organisationId = await this.organisationOf(trx, event);
      let outcome: EventOutcome['outcome'] = 'ignored';
      const handled = SUBSCRIPTION_EVENTS.has(event.type) || PAID_EVENTS.has(event.type) || event.type === 'invoice.payment_failed';
      if (handled && !organisationId) outcome = 'unknown-organisation';
      // claim first: a second delivery of the same event stops here
      const claimed = await store.claimEvent(trx, { id: event.id, type: event.type, organisationId: organisationId ?? null, outcome });
      if (!claimed) return { eventId: event.id, type: event.type, duplicate: true, outcome: 'ignored' as const };
      if (!handled || !organisationId) return { eventId: event.id, type: event.type, duplicate: false, outcome };

      const org = await store.lockOrganisation(trx, organisationId);
      if (!org) return { eventId: event.id, type: event.type, duplicate: false, outcome: 'unknown-organisation' as const };
      let applied = false;
      if (SUBSCRIPTION_EVENTS.has(event.type)) {
        applied = await this.applySubscription(trx, organisationId, org.plan_id, event);
        if (applied) invalidate = organisationId;
      } else if (PAID_EVENTS.has(event.type)) {
        applied = await this.applyInvoice(trx, organisationId, event.data.object as Stripe.Invoice, 'paid', after);
      } else if (event.type === 'invoice.payment_failed') {
        applied = await this.applyInvoice(trx, organisationId, event.data.object as Stripe.Invoice, 'failed', after);
      }
      const final: EventOutcome['outcome'] = applied ? 'applied' : 'ignored';
      if (final !== outcome) await trx('billing_events').where({ provider_event_id: event.id }).update({ outcome: final });
      return { eventId: event.id, type: event.type, duplicate: false, outcome: final };
    });
    if (invalidate) this.keys.invalidateOrganisation(invalidate);
    for (const job of after) void job().catch((error) => this.logger.error({ err: error, event: event.id }, 'billing mail after a webhook event not sent'));
    return result;
  }

  private async organisationOf(trx: Trx, event: Stripe.Event): Promise<string | undefined> {
    const object = event.data.object as { metadata?: Record<string, string> | null; customer?: string | { id: string } | null };
    const fromMetadata = object.metadata?.['fermiwell_organisation'];
    if (fromMetadata && /^[0-9a-f-]{36}$/i.test(fromMetadata) && (await trx('organisations').where({ id: fromMetadata }).first('id'))) return fromMetadata;
    const customer = customerId(object.customer);
    return customer ? store.organisationOfCustomer(trx, customer) : undefined;
  }

  private async applySubscription(trx: Trx, organisationId: string, currentPlanId: string, event: Stripe.Event): Promise<boolean> {
    const provider = event.data.object as ProviderSubscription;
    const state = subscriptionState(provider);
    const row = await store.subscription(trx, organisationId);
    // a subscription the organisation no longer has (replaced by a newer one) does not steer it
    if (row?.provider_subscription_id && row.provider_subscription_id !== state.id) return false;
    if (row?.last_event_created && Number(row.last_event_created) > event.created) return false;
    const current = (await store.plan(trx, currentPlanId))!;
    const audit = (details: Record<string, unknown>) =>
      this.audit.record({ organisationId, actor: null, action: 'plan.changed', target: { type: 'organisation', id: organisationId }, details: { ...details, by: `payment provider (${event.type})` } }, trx);

    if (event.type === 'customer.subscription.deleted' || state.status === 'canceled' || state.status === 'incomplete_expired') {
      if (!row) return false;
      await store.deleteSubscription(trx, organisationId);
      if (currentPlanId !== 'free') {
        await store.setOrganisationPlan(trx, organisationId, 'free');
        await audit({ from: currentPlanId, to: 'free', effective: 'now' });
      }
      return true;
    }

    const plan = await store.planByPrice(trx, state.priceId);
    if (!plan) {
      this.logger.warn({ organisationId, price: state.priceId }, 'subscription event with a price of no Fermiwell plan; ignored');
      return false;
    }
    let planId = row?.plan_id ?? currentPlanId;
    let scheduled = row?.scheduled_plan_id ?? null;
    const renewed = row ? state.currentPeriodStart.getTime() >= new Date(row.current_period_end).getTime() : false;
    const active = state.status === 'active' || state.status === 'trialing' || state.status === 'past_due';
    if (active && plan.price_cents > current.price_cents) {
      planId = plan.id; // more expensive: at once
      scheduled = null;
    } else if (plan.id !== planId) {
      if (renewed || !row) {
        planId = plan.id;
        scheduled = null;
      } else scheduled = plan.id; // cheaper: from the period end
    } else if (renewed) scheduled = null;
    await store.saveSubscription(trx, {
      organisation_id: organisationId,
      plan_id: planId,
      provider_subscription_id: state.id,
      provider_item_id: state.itemId,
      status: state.status,
      current_period_start: state.currentPeriodStart,
      current_period_end: state.currentPeriodEnd,
      scheduled_plan_id: scheduled,
      cancel_at_period_end: state.cancelAtPeriodEnd,
      last_event_created: event.created,
    });
    if (planId !== currentPlanId && active) {
      await store.setOrganisationPlan(trx, organisationId, planId);
      await audit({ from: currentPlanId, to: planId, effective: 'now' });
    }
    return true;
  }

  private async applyInvoice(trx: Trx, organisationId: string, inv: Stripe.Invoice, outcome: 'paid' | 'failed', after: After): Promise<boolean> {
    const line = inv.lines?.data?.[0];
    const priceId = (line as { pricing?: { price_details?: { price?: string } }; price?: { id: string } } | undefined)?.pricing?.price_details?.price ?? (line as { price?: { id: string } } | undefined)?.price?.id;
    const plan = priceId ? await store.planByPrice(trx, priceId) : undefined;
    const periodStart = line?.period?.start ? new Date(line.period.start * 1000) : inv.period_start ? new Date(inv.period_start * 1000) : null;
    const periodEnd = line?.period?.end ? new Date(line.period.end * 1000) : inv.period_end ? new Date(inv.period_end * 1000) : null;
    const existing = await store.invoiceByProviderId(trx, inv.id!);
    const status = outcome === 'paid' ? 'paid' : 'open';
    const amount = outcome === 'paid' ? inv.amount_paid || inv.amount_due : inv.amount_due;
    let row: store.InvoiceRow;
    if (existing) {
      if (existing.status === status) return false;
      await store.updateInvoice(trx, existing.id, { status, amount_cents: amount, paid_at: outcome === 'paid' ? new Date() : null });
      row = { ...existing, status, amount_cents: amount };
    } else {
      row = await store.insertInvoice(trx, {
        organisation_id: organisationId,
        ...(inv.number ? { number: inv.number } : {}),
        source: 'provider',
        provider_invoice_id: inv.id!,
        provider_charge_id: null,
        plan_id: plan?.id ?? null,
        description: line?.description ?? inv.description ?? `${plan?.name ?? 'Fermiwell'} plan`,
        amount_cents: amount,
        currency: inv.currency,
        status,
        period_start: periodStart,
        period_end: periodEnd,
        paid_at: outcome === 'paid' ? new Date() : null,
      });
    }
    const planRow = plan ?? { name: 'current', price_cents: amount, currency: inv.currency };
    if (outcome === 'paid') {
      after.push(() => this.billing.mailReceipt(organisationId, row, planRow));
    } else {
      await trx('subscriptions').where({ organisation_id: organisationId }).update({ status: 'past_due', updated_at: trx.fn.now() });
      after.push(() => this.billing.mailPaymentFailed(organisationId, planRow, 'the card was declined', 'The plan stays as it is while the payment provider retries.', amount));
    }
    return true;
  }
}
