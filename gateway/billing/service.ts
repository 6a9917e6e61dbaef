/**
 * Plans and billing (DESIGN.md §1 journey 4, §6): the plan catalogue mirrored at the payment
 * provider, a customer per organisation, the card (test mode: test card numbers only), plan
 * changes, invoices, and the sweep that applies changes that fell due. REST and GraphQL call the
 * same methods; owners change plan and card (`billing.manage`), every member reads
 * (`billing.read`).
 *
 * When a change takes effect — the rule the dashboard shows beside every plan:
 * - Moving to a more expensive plan (subscribing, upgrading) takes effect AT ONCE: a new monthly
 *   period starts now and the new plan's full price is charged now (the unused part of the old
 *   period is not credited). The limits change the moment the payment succeeds.
 * - Moving to a cheaper plan (downgrading, or cancelling = Free) takes effect AT THE END of the
 *   paid period: the organisation keeps what it paid for; nothing is charged or refunded. Choosing
 *   the current plan again before then withdraws the scheduled change.
 *
 * Limits: they live on the organisation's plan (organisations.plan_id). This instance forgets its
 * cached keys of the organisation at once; other instances read the new plan when their key cache
 * entry expires (keys/service.ts CACHE_TTL_MS, 5 s).
 *
 * Consistency: a change runs in one transaction that holds the organisation's row lock across the
 * provider call, so two changes never interleave on any instance. The provider is called before
 * anything is written: a declined card or an unreachable provider leaves the database as it was.
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from '../config.js';
import type { AuditLog } from '../audit/service.js';
import type { Mailer } from '../mail/mailer.js';
import type { KeyService } from '../keys/service.js';
import type { AccessService, Actor } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import { cardName, paymentFailedMail, receiptMail } from './messages.js';
import * as store from './store.js';
import { providerProblem, type PaymentProvider, type SubscriptionState } from './stripe-client.js';
import { TEST_CARDS, testCardFor } from './test-cards.js';

export interface PlanView {
  id: string;
  name: string;
  priceCents: number;
  currency: string;
  pointsPerMonth: number;
  requestsPerSecond: number;
  maxBatch: number;
  /** null = unlimited */
  tableBuildsPerMonth: number | null;
}

export interface SubscriptionView {
  plan: string;
  status: string;
  currentPeriodStart: string;
  currentPeriodEnd: string;
  cancelAtPeriodEnd: boolean;
  /** The plan that takes over at currentPeriodEnd (a downgrade, or free after a cancellation). */
  scheduledPlan: string | null;
  /** false for subscriptions recorded without one at the provider (demo data). */
  atProvider: boolean;
}

export interface CardView {
  brand: string;
  last4: string;
  expMonth: number;
  expYear: number;
}

export interface InvoiceView {
  id: string;
  number: string;
  /** provider: a mirror of the payment provider's invoice; fermiwell: recorded by Fermiwell where the provider made none. */
  source: 'provider' | 'fermiwell';
  plan: string | null;
  description: string;
  amountCents: number;
  currency: string;
  status: string;
  periodStart: string | null;
  periodEnd: string | null;
  paidAt: string | null;
  createdAt: string;
}

export interface BillingView {
  organisationId: string;
  plan: PlanView;
  subscription: SubscriptionView | null;
  card: CardView | null;
  /** Test mode: card entry takes the provider's test card numbers only. */
  testMode: boolean;
  testCards: Array<{ number: string; label: string; outcome: string }>;
  plans: PlanView[];
  /** When changes take effect (see the top of this file). */
  changePolicy: { upgrade: 'now'; downgrade: 'period-end' };
}

export interface PlanChange {
  from: string;
  to: string;
  /** now: in force already; period-end: scheduled for `effectiveAt`; none: nothing to change. */
  effective: 'now' | 'period-end' | 'none';
  effectiveAt: string;
  invoice: InvoiceView | null;
}

export interface TestCardInput {
  number: string;
  expMonth: number;
  expYear: number;
  cvc: string;
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

export function planView(row: store.BillingPlanRow): PlanView {
  return {
    id: row.id,
    name: row.name,
    priceCents: row.price_cents,
    currency: row.currency,
    pointsPerMonth: Number(row.points_per_month),
    requestsPerSecond: row.requests_per_second,
    maxBatch: row.max_batch,
    tableBuildsPerMonth: row.table_builds_per_month,
  };
}

export function invoiceView(row: store.InvoiceRow): InvoiceView {
  return {
    id: row.id,
    number: row.number,
    source: row.source,
    plan: row.plan_id,
    description: row.description,
    amountCents: row.amount_cents,
    currency: row.currency,
    status: row.status,
    periodStart: iso(row.period_start),
    periodEnd: iso(row.period_end),
    paidAt: iso(row.paid_at),
    createdAt: new Date(row.created_at).toISOString(),
  };
}

const notConfigured = () =>
  new ProblemError('billing-not-configured', 503, 'Billing is not configured', 'This Fermiwell instance has no payment provider (STRIPE_SECRET_KEY is unset). Plans can still be read; an operator can set an organisation\'s plan.');

const dayOf = (d: Date) => d.toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

/** The organisation's mails go to its owners; one failure must not fail the change. */
type MailJob = () => Promise<void>;

export class BillingService {
  private catalogReady: Promise<void> | undefined;
  private readonly sweepTimer: NodeJS.Timeout | undefined;

  constructor(
    private readonly db: Knex,
    private readonly config: Config,
    readonly provider: PaymentProvider | undefined,
    private readonly access: AccessService,
    private readonly audit: AuditLog,
    private readonly mailer: Mailer,
    private readonly keys: KeyService,
    private readonly logger: Logger,
  ) {
    if (provider) {
      void this.ready().catch((error) => this.logger.warn({ err: error }, 'plan catalogue not yet synced with the payment provider; will retry on the next billing request'));
    }
    this.sweepTimer = setInterval(() => void this.applyDueChanges().catch((error) => this.logger.error({ err: error }, 'applying due plan changes failed')), config.BILLING_SWEEP_INTERVAL_MS);
    this.sweepTimer.unref();
  }

  /**
   * Ends the organisation's paid subscription at the provider before the organisation is deleted
   * (called inside the deletion's transaction by OrganisationService): a deleted organisation must
   * never go on being charged. A provider failure refuses the deletion (503, nothing deleted).
   */
  async endForDeletedOrganisation(organisationId: string, db: Knex | Knex.Transaction = this.db): Promise<void> {
    const sub = await store.subscription(db, organisationId);
    if (!sub?.provider_subscription_id) return;
    if (!this.provider) throw notConfigured();
    try {
      await this.provider.cancelSubscription(sub.provider_subscription_id);
    } catch (error) {
      throw providerProblem(error, 'The organisation was not deleted and its subscription is unchanged.');
    }
  }

  get testMode(): boolean {
    return this.provider?.testMode ?? false;
  }

  get billingUrl(): string {
    return `${this.config.PUBLIC_URL}/billing`;
  }

  /**
   * Products and prices of every plan exist at the provider and their ids are on the plans
   * (idempotent: fixed product ids, prices found by amount). Done once per instance; a failure is
   * retried by the next call.
   */
  ready(): Promise<void> {
    if (!this.provider) return Promise.reject(notConfigured());
    const provider = this.provider;
    this.catalogReady ??= (async () => {
      for (const plan of await store.plans(this.db)) {
        const productId = await provider.ensureProduct(plan.id, plan.name);
        const priceId = await provider.ensurePrice(plan.id, productId, plan.price_cents, plan.currency, plan.provider_price_id);
        if (plan.provider_product_id !== productId || plan.provider_price_id !== priceId) await store.setPlanProviderIds(this.db, plan.id, productId, priceId);
      }
      this.logger.info('plan catalogue synced with the payment provider');
    })().catch((error) => {
      this.catalogReady = undefined;
      throw providerProblem(error, 'No plan was changed.');
    });
    return this.catalogReady;
  }

  async plans(): Promise<PlanView[]> {
    return (await store.plans(this.db)).map(planView);
  }

  async overview(actor: Actor, organisationId: string): Promise<BillingView> {
    await this.access.require(actor, organisationId, 'billing.read');
    await this.applyDueChanges(organisationId);
    return this.view(organisationId);
  }

  private async view(organisationId: string, db: Knex | Knex.Transaction = this.db): Promise<BillingView> {
    const [org, plans, sub, customer] = await Promise.all([
      db('organisations').where({ id: organisationId }).first('plan_id'),
      store.plans(db),
      store.subscription(db, organisationId),
      store.customer(db, organisationId),
    ]);
    const current = plans.find((p) => p.id === org?.plan_id) ?? plans[0]!;
    return {
      organisationId,
      plan: planView(current),
      subscription: sub
        ? {
            plan: sub.plan_id,
            status: sub.status,
            currentPeriodStart: new Date(sub.current_period_start).toISOString(),
            currentPeriodEnd: new Date(sub.current_period_end).toISOString(),
            cancelAtPeriodEnd: sub.cancel_at_period_end,
            scheduledPlan: sub.scheduled_plan_id ?? (sub.cancel_at_period_end ? 'free' : null),
            atProvider: sub.provider_subscription_id !== null,
          }
        : null,
      card: customer?.card_source_id
        ? { brand: customer.card_brand ?? 'card', last4: customer.card_last4 ?? '????', expMonth: customer.card_exp_month ?? 0, expYear: customer.card_exp_year ?? 0 }
        : null,
      testMode: this.testMode,
      testCards: this.testMode ? TEST_CARDS.map(({ number, label, outcome }) => ({ number, label, outcome })) : [],
      plans: plans.map(planView),
      changePolicy: { upgrade: 'now', downgrade: 'period-end' },
    };
  }

  async invoices(actor: Actor, organisationId: string): Promise<InvoiceView[]> {
    await this.access.require(actor, organisationId, 'billing.read');
    return (await store.invoices(this.db, organisationId)).map(invoiceView);
  }

  async invoice(actor: Actor, organisationId: string, invoiceId: string): Promise<InvoiceView> {
    await this.access.require(actor, organisationId, 'billing.read');
    const row = /^[0-9a-f-]{36}$/i.test(invoiceId) ? await store.invoice(this.db, organisationId, invoiceId) : undefined;
    if (!row) throw new ProblemError('invoice-not-found', 404, 'Invoice not found', `There is no invoice ${invoiceId} in this organisation. GET /v1/organisations/${organisationId}/billing/invoices lists them.`);
    return invoiceView(row);
  }

  /** The provider customer of the organisation, made (or made again, when the provider lost it) on demand. */
  private async customerOf(organisationId: string, provider: PaymentProvider): Promise<store.CustomerRow> {
    const existing = await store.customer(this.db, organisationId);
    if (existing && (await provider.customerExists(existing.provider_customer_id))) return existing;
    const name = (await store.organisationName(this.db, organisationId)) ?? organisationId;
    const id = await provider.createCustomer(organisationId, name);
    await store.saveCustomer(this.db, organisationId, id);
    if (existing) this.logger.warn({ organisationId, lost: existing.provider_customer_id, now: id }, 'the payment provider no longer knew the customer; made a new one (its card must be entered again)');
    return (await store.customer(this.db, organisationId))!;
  }

  /** Test mode: takes a test card number, attaches the provider's matching test card. Owners only. */
  async setTestCard(actor: Actor, organisationId: string, input: TestCardInput): Promise<CardView> {
    await this.access.require(actor, organisationId, 'billing.manage');
    const provider = this.provider;
    if (!provider) throw notConfigured();
    if (!provider.testMode) {
      throw new ProblemError('card-entry-test-mode-only', 409, 'Card entry is test mode only', 'This instance uses a live payment key. Card numbers are never typed into Fermiwell with live keys; use the payment provider\'s own card form.');
    }
    const card = testCardFor(input.number);
    if (!card) {
      throw new ProblemError('not-a-test-card', 400, 'Not a test card number', `Test mode accepts only the payment provider's test cards: ${TEST_CARDS.map((c) => `${c.number} (${c.label})`).join(', ')}. Real card numbers are never accepted here.`, {
        errors: [{ field: 'number', message: 'must be one of the test card numbers' }],
      });
    }
    const now = new Date();
    if (input.expYear < now.getUTCFullYear() || (input.expYear === now.getUTCFullYear() && input.expMonth < now.getUTCMonth() + 1)) {
      throw new ProblemError('invalid-request', 400, 'Invalid request', `The expiry ${String(input.expMonth).padStart(2, '0')}/${input.expYear} is in the past; any future month works for test cards.`, {
        errors: [{ field: 'expYear', message: 'the card has expired' }],
      });
    }
    await this.ready();
    let customer: store.CustomerRow;
    let summary;
    try {
      customer = await this.customerOf(organisationId, provider);
      summary = await provider.replaceCard(customer.provider_customer_id, card.token, customer.card_source_id);
    } catch (error) {
      const current = await store.customer(this.db, organisationId);
      throw providerProblem(error, current?.card_source_id ? `The card on file (${current.card_brand} ending ${current.card_last4}) stays.` : 'No card was saved.');
    }
    await this.db.transaction(async (trx) => {
      await store.saveCard(trx, organisationId, summary);
      await this.audit.record({ organisationId, actor, action: 'billing.card-changed', target: { type: 'organisation', id: organisationId }, details: { brand: summary.brand, last4: summary.last4 }, ip: actor.ip ?? null }, trx);
    });
    return { brand: summary.brand, last4: summary.last4, expMonth: summary.expMonth, expYear: summary.expYear };
  }

  /** Moves the organisation to `planId` (see the top of this file for when it takes effect). Owners only. */
  async changePlan(actor: Actor, organisationId: string, planId: string): Promise<{ billing: BillingView; change: PlanChange }> {
    await this.access.require(actor, organisationId, 'billing.manage');
    const target = await store.plan(this.db, planId);
    if (!target) {
      const ids = (await store.plans(this.db)).map((p) => p.id).join(', ');
      throw new ProblemError('invalid-request', 400, 'Invalid request', `There is no plan "${planId}"; plans are ${ids}.`, { errors: [{ field: 'plan', message: `must be one of ${ids}` }] });
    }
    const provider = this.provider;
    if (!provider) throw notConfigured();
    await this.ready();
    await this.applyDueChanges(organisationId);
    const mails: MailJob[] = [];
    let changedNow = false;
    let change: PlanChange;
    try {
      change = await this.db.transaction(async (trx) => {
        const org = await store.lockOrganisation(trx, organisationId);
        if (!org) throw new ProblemError('organisation-not-found', 404, 'Organisation not found', `There is no organisation ${organisationId}.`);
        const current = (await store.plan(trx, org.plan_id))!;
        const sub = await store.subscription(trx, organisationId);
        const fresh = (await store.plan(trx, target.id))!;
        const base = { from: current.id, to: target.id };

        // the current plan again: withdraw a scheduled downgrade or cancellation, or nothing to do
        if (target.id === current.id) {
          if (sub && (sub.scheduled_plan_id || sub.cancel_at_period_end)) {
            const live = sub.provider_subscription_id ? await provider.retrieveSubscription(sub.provider_subscription_id) : undefined;
            if (live) {
              if (live.priceId !== fresh.provider_price_id) await provider.schedulePrice(live, fresh.provider_price_id!, fresh.id);
              else if (live.cancelAtPeriodEnd) await provider.setCancelAtPeriodEnd(live, false);
            }
            await store.updateSubscription(trx, organisationId, { scheduled_plan_id: null, cancel_at_period_end: false });
            await this.audit.record({ organisationId, actor, action: 'plan.changed', target: { type: 'organisation', id: organisationId }, details: { ...base, effective: 'now', withdrawn: sub.scheduled_plan_id ?? 'free' }, ip: actor.ip ?? null }, trx);
            return { ...base, effective: 'now', effectiveAt: new Date().toISOString(), invoice: null };
          }
          return { ...base, effective: 'none', effectiveAt: new Date().toISOString(), invoice: null };
        }

        const upgrade = target.price_cents > current.price_cents || (target.price_cents === current.price_cents && target.sort > current.sort);
        if (upgrade) {
          const customer = await this.customerOf(organisationId, provider);
          if (!customer.card_source_id) {
            throw new ProblemError('card-required', 409, 'Card required', `The ${target.name} plan costs ${(target.price_cents / 100).toFixed(2)} ${target.currency.toUpperCase()} a month and is paid at once. Add a card first (Plan & billing → Card); the plan stays ${current.name}.`);
          }
          const live = sub?.provider_subscription_id ? await provider.retrieveSubscription(sub.provider_subscription_id) : undefined;
          let state: SubscriptionState;
          try {
            state = live ? await provider.upgradeSubscription(live, fresh.provider_price_id!, fresh.id) : await provider.createSubscription(customer.provider_customer_id, fresh.provider_price_id!, organisationId, fresh.id);
          } catch (error) {
            const problem = providerProblem(error, `The plan stays ${current.name}.`);
            if (problem.problem.status === 402) mails.push(() => this.mailPaymentFailed(organisationId, fresh, String(problem.problem['declineCode'] ?? 'declined'), `The plan stays ${current.name}.`));
            throw problem;
          }
          await store.saveSubscription(trx, {
            organisation_id: organisationId,
            plan_id: fresh.id,
            provider_subscription_id: state.id,
            provider_item_id: state.itemId,
            status: state.status,
            current_period_start: state.currentPeriodStart,
            current_period_end: state.currentPeriodEnd,
            scheduled_plan_id: null,
            cancel_at_period_end: false,
          });
          await store.setOrganisationPlan(trx, organisationId, fresh.id);
          const invoice = await this.recordChargeInvoice(trx, organisationId, fresh, state);
          await this.audit.record({ organisationId, actor, action: 'plan.changed', target: { type: 'organisation', id: organisationId }, details: { ...base, effective: 'now', invoice: invoice.number }, ip: actor.ip ?? null }, trx);
          changedNow = true;
          if (invoice.status === 'paid') mails.push(() => this.mailReceipt(organisationId, invoice, fresh, customer));
          return { ...base, effective: 'now', effectiveAt: state.currentPeriodStart.toISOString(), invoice: invoiceView(invoice) };
        }

        // cheaper: at the end of the paid period; without a subscription (e.g. a plan an operator set), at once
        if (!sub) {
          await store.setOrganisationPlan(trx, organisationId, fresh.id);
          await this.audit.record({ organisationId, actor, action: 'plan.changed', target: { type: 'organisation', id: organisationId }, details: { ...base, effective: 'now' }, ip: actor.ip ?? null }, trx);
          changedNow = true;
          return { ...base, effective: 'now', effectiveAt: new Date().toISOString(), invoice: null };
        }
        const live = sub.provider_subscription_id ? await provider.retrieveSubscription(sub.provider_subscription_id) : undefined;
        try {
          if (live && fresh.price_cents === 0) await provider.setCancelAtPeriodEnd(live, true);
          else if (live) await provider.schedulePrice(live, fresh.provider_price_id!, fresh.id);
        } catch (error) {
          throw providerProblem(error, `The plan stays ${current.name}.`);
        }
        await store.updateSubscription(trx, organisationId, fresh.price_cents === 0 ? { cancel_at_period_end: true, scheduled_plan_id: 'free' } : { cancel_at_period_end: false, scheduled_plan_id: fresh.id });
        const at = new Date(sub.current_period_end);
        await this.audit.record({ organisationId, actor, action: 'plan.changed', target: { type: 'organisation', id: organisationId }, details: { ...base, effective: 'period-end', at: at.toISOString() }, ip: actor.ip ?? null }, trx);
        return { ...base, effective: 'period-end', effectiveAt: at.toISOString(), invoice: null };
      });
    } finally {
      for (const job of mails) void job().catch((error) => this.logger.error({ err: error, organisationId }, 'billing mail not sent'));
    }
    if (changedNow) this.keys.invalidateOrganisation(organisationId);
    return { billing: await this.view(organisationId), change };
  }

  /**
   * The invoice of a charge made for a subscription change: the provider's own when it made one
   * (mirrored), else one recorded by Fermiwell from the change (source "fermiwell").
   */
  private async recordChargeInvoice(trx: Knex.Transaction, organisationId: string, plan: store.BillingPlanRow, state: SubscriptionState): Promise<store.InvoiceRow> {
    const inv = state.latestInvoice;
    if (inv?.id) {
      const existing = await store.invoiceByProviderId(trx, inv.id);
      if (existing) return existing;
      return store.insertInvoice(trx, {
        organisation_id: organisationId,
        ...(inv.number ? { number: inv.number } : {}),
        source: 'provider',
        provider_invoice_id: inv.id,
        provider_charge_id: null,
        plan_id: plan.id,
        description: `${plan.name} plan, ${dayOf(state.currentPeriodStart)} – ${dayOf(state.currentPeriodEnd)}`,
        amount_cents: inv.amount_paid || inv.amount_due,
        currency: inv.currency,
        status: inv.status ?? 'open',
        period_start: state.currentPeriodStart,
        period_end: state.currentPeriodEnd,
        paid_at: inv.status === 'paid' ? new Date() : null,
      });
    }
    return store.insertInvoice(trx, {
      organisation_id: organisationId,
      source: 'fermiwell',
      provider_invoice_id: null,
      provider_charge_id: state.latestCharge,
      plan_id: plan.id,
      description: `${plan.name} plan, ${dayOf(state.currentPeriodStart)} – ${dayOf(state.currentPeriodEnd)}`,
      amount_cents: plan.price_cents,
      currency: plan.currency,
      status: 'paid',
      period_start: state.currentPeriodStart,
      period_end: state.currentPeriodEnd,
      paid_at: new Date(),
    });
  }

  /**
   * Applies downgrades and cancellations whose period has ended (every instance runs this every
   * BILLING_SWEEP_INTERVAL_MS, and before reading or changing an organisation's billing). Each
   * change runs under the organisation's row lock and re-checks, so instances never apply it twice.
   */
  async applyDueChanges(organisationId?: string, now = new Date()): Promise<number> {
    const due = await store.dueChanges(this.db, now, organisationId);
    let applied = 0;
    for (const candidate of due) {
      const done = await this.db.transaction(async (trx) => {
        const org = await store.lockOrganisation(trx, candidate.organisation_id);
        const sub = await store.subscription(trx, candidate.organisation_id);
        if (!org || !sub || new Date(sub.current_period_end) > now || !(sub.scheduled_plan_id || sub.cancel_at_period_end)) return false;
        const to = sub.cancel_at_period_end ? 'free' : sub.scheduled_plan_id!;
        if (to === 'free') {
          if (sub.provider_subscription_id && this.provider) await this.provider.cancelSubscription(sub.provider_subscription_id);
          await store.deleteSubscription(trx, sub.organisation_id);
        } else {
          const next = new Date(sub.current_period_end);
          next.setUTCMonth(next.getUTCMonth() + 1);
          await store.updateSubscription(trx, sub.organisation_id, { plan_id: to, scheduled_plan_id: null, current_period_start: sub.current_period_end, current_period_end: next });
        }
        await store.setOrganisationPlan(trx, sub.organisation_id, to);
        await this.audit.record({ organisationId: sub.organisation_id, actor: null, action: 'plan.changed', target: { type: 'organisation', id: sub.organisation_id }, details: { from: org.plan_id, to, effective: 'period-end', at: new Date(sub.current_period_end).toISOString() } }, trx);
        return true;
      });
      if (done) {
        applied += 1;
        this.keys.invalidateOrganisation(candidate.organisation_id);
      }
    }
    return applied;
  }

  /** Mail to every owner of the organisation. */
  async mailOwners(organisationId: string, mail: (owner: { email: string; display_name: string }, organisationName: string) => Parameters<Mailer['send']>[1]): Promise<void> {
    const [owners, name] = await Promise.all([store.owners(this.db, organisationId), store.organisationName(this.db, organisationId)]);
    for (const owner of owners) this.mailer.send(owner.email, mail(owner, name ?? 'Your organisation'));
  }

  async mailReceipt(organisationId: string, invoice: store.InvoiceRow, plan: Pick<store.BillingPlanRow, 'name'>, customer?: store.CustomerRow): Promise<void> {
    const card = customer ?? (await store.customer(this.db, organisationId));
    await this.mailOwners(organisationId, (_owner, organisationName) =>
      receiptMail({
        organisationName,
        invoiceNumber: invoice.number,
        planName: plan.name,
        amountCents: invoice.amount_cents,
        currency: invoice.currency,
        periodStart: invoice.period_start,
        periodEnd: invoice.period_end,
        card: card?.card_last4 ? `the ${cardName(card.card_brand, card.card_last4)}` : null,
        billingUrl: this.billingUrl,
      }),
    );
  }

  async mailPaymentFailed(organisationId: string, plan: Pick<store.BillingPlanRow, 'name' | 'price_cents' | 'currency'>, reason: string, planKept: string, amountCents = plan.price_cents): Promise<void> {
    await this.mailOwners(organisationId, (_owner, organisationName) =>
      paymentFailedMail({ organisationName, planName: plan.name, amountCents, currency: plan.currency, reason: reason.replace(/_/g, ' '), planKept, billingUrl: this.billingUrl }),
    );
  }

  close(): void {
    if (this.sweepTimer) clearInterval(this.sweepTimer);
  }
}
