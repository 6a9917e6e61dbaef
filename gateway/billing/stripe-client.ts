/**
 * The payment provider as the billing service uses it: the official `stripe` SDK configured from
 * the environment (STRIPE_SECRET_KEY; STRIPE_API_URL when not Stripe itself — `npm start` and
 * `npm test` point it at the local fake), and the few calls billing makes, with the provider's
 * errors turned into problems a person can act on. The same code reaches real Stripe when the
 * environment says so; nothing here knows about the fake.
 */
import Stripe from 'stripe';
import type { Config } from '../config.js';
import { ProblemError } from '../shared/problem.js';

export type ProviderSubscription = Stripe.Subscription & { latest_charge?: string | null };

export interface CardSummary {
  sourceId: string;
  brand: string;
  last4: string;
  expMonth: number;
  expYear: number;
}

export interface SubscriptionState {
  id: string;
  itemId: string;
  priceId: string;
  status: string;
  customerId: string;
  currentPeriodStart: Date;
  currentPeriodEnd: Date;
  cancelAtPeriodEnd: boolean;
  latestInvoice: Stripe.Invoice | null;
  /** The charge the provider made for this change when it keeps no invoice for it. */
  latestCharge: string | null;
}

const BRANDS: Record<string, string> = { 'American Express': 'amex', MasterCard: 'mastercard', Visa: 'visa', Discover: 'discover', JCB: 'jcb', 'Diners Club': 'diners' };

export function isMissing(error: unknown): boolean {
  return error instanceof Stripe.errors.StripeError && (error.code === 'resource_missing' || error.statusCode === 404);
}

/** A provider failure as a problem: declines are 402 with the provider's reason; outages 503. */
export function providerProblem(error: unknown, whatStaysTheSame: string): ProblemError {
  if (error instanceof Stripe.errors.StripeCardError) {
    const reason = error.decline_code ?? error.code ?? 'card_declined';
    return new ProblemError(
      'payment-declined',
      402,
      'Card declined',
      `The card was declined (${reason.replace(/_/g, ' ')}): ${error.message} ${whatStaysTheSame} Nothing was charged. Try another card, or ask your bank.`,
      { declineCode: reason },
    );
  }
  if (error instanceof Stripe.errors.StripeConnectionError || error instanceof Stripe.errors.StripeAPIError || error instanceof Stripe.errors.StripeRateLimitError) {
    return new ProblemError('payments-unavailable', 503, 'Payment provider unavailable', `The payment provider could not be reached or failed (${error.message}). ${whatStaysTheSame} Try again in a minute.`);
  }
  if (error instanceof Stripe.errors.StripeAuthenticationError) {
    return new ProblemError('billing-not-configured', 503, 'Billing is not configured', `The payment provider refused Fermiwell's key. ${whatStaysTheSame} An operator must set STRIPE_SECRET_KEY.`);
  }
  return error instanceof ProblemError ? error : new ProblemError('payments-error', 502, 'Payment provider error', `The payment provider refused the request${error instanceof Error ? ` (${error.message})` : ''}. ${whatStaysTheSame}`);
}

function toDate(seconds: number | null | undefined): Date {
  return new Date((seconds ?? 0) * 1000);
}

export function subscriptionState(sub: ProviderSubscription): SubscriptionState {
  const item = sub.items.data[0]!;
  // current API versions keep the period on the item; older ones (and some fakes) on the subscription
  const legacy = sub as unknown as { current_period_start?: number; current_period_end?: number };
  return {
    id: sub.id,
    itemId: item.id,
    priceId: typeof item.price === 'string' ? item.price : item.price.id,
    status: sub.status,
    customerId: typeof sub.customer === 'string' ? sub.customer : sub.customer.id,
    currentPeriodStart: toDate(item.current_period_start ?? legacy.current_period_start),
    currentPeriodEnd: toDate(item.current_period_end ?? legacy.current_period_end),
    cancelAtPeriodEnd: sub.cancel_at_period_end,
    latestInvoice: sub.latest_invoice && typeof sub.latest_invoice === 'object' ? sub.latest_invoice : null,
    latestCharge: sub.latest_charge ?? null,
  };
}

export class PaymentProvider {
  readonly stripe: Stripe;
  /** Test-mode key: card entry by test card numbers is allowed. */
  readonly testMode: boolean;

  constructor(secretKey: string, apiUrl: string | undefined) {
    const url = apiUrl ? new URL(apiUrl) : undefined;
    this.stripe = new Stripe(secretKey, {
      ...(url
        ? {
            host: url.hostname,
            port: Number(url.port || (url.protocol === 'https:' ? 443 : 80)),
            protocol: url.protocol === 'https:' ? 'https' : 'http',
          }
        : {}),
      maxNetworkRetries: 1,
      timeout: 20_000,
      appInfo: { name: 'Fermiwell' },
    });
    this.testMode = /^(sk|rk)_test_/.test(secretKey);
  }

  /** The product of a plan, made once with a fixed id (idempotent across starts and instances). */
  async ensureProduct(planId: string, name: string): Promise<string> {
    const id = `fermiwell_plan_${planId}`;
    try {
      return (await this.stripe.products.retrieve(id)).id;
    } catch (error) {
      if (!isMissing(error)) throw error;
    }
    try {
      return (await this.stripe.products.create({ id, name: `Fermiwell ${name}`, metadata: { fermiwell_plan: planId } })).id;
    } catch (error) {
      // another instance made it meanwhile
      if (error instanceof Stripe.errors.StripeError && error.code === 'resource_already_exists') return id;
      throw error;
    }
  }

  /** The monthly price of a plan: an active one with the amount, else a new one. */
  async ensurePrice(planId: string, productId: string, amountCents: number, currency: string, knownPriceId: string | null = null): Promise<string> {
    const fits = (p: Stripe.Price) => p.active && p.product === productId && p.unit_amount === amountCents && p.currency === currency && p.recurring?.interval === 'month';
    if (knownPriceId) {
      const known = await this.stripe.prices.retrieve(knownPriceId).catch((error) => (isMissing(error) ? undefined : Promise.reject(error)));
      if (known && fits(known)) return known.id;
    }
    const prices = await this.stripe.prices.list({ product: productId, active: true, limit: 100 });
    const found = prices.data.find(fits);
    if (found) return found.id;
    const created = await this.stripe.prices.create({
      product: productId,
      unit_amount: amountCents,
      currency,
      recurring: { interval: 'month' },
      lookup_key: `fermiwell_${planId}_monthly`,
      transfer_lookup_key: true,
      metadata: { fermiwell_plan: planId },
    });
    return created.id;
  }

  async createCustomer(organisationId: string, name: string): Promise<string> {
    return (await this.stripe.customers.create({ name, metadata: { fermiwell_organisation: organisationId } })).id;
  }

  /** Whether the customer still exists at the provider (a local fake forgets everything when restarted). */
  async customerExists(customerId: string): Promise<boolean> {
    try {
      const customer = await this.stripe.customers.retrieve(customerId);
      return !('deleted' in customer && customer.deleted);
    } catch (error) {
      if (isMissing(error)) return false;
      throw error;
    }
  }

  /** Attaches a card by its provider token and makes it the default; the previous default card is removed. */
  async replaceCard(customerId: string, token: string, previousSourceId: string | null): Promise<CardSummary> {
    const source = (await this.stripe.customers.createSource(customerId, { source: token })) as Stripe.Card;
    await this.stripe.customers.update(customerId, { default_source: source.id });
    if (previousSourceId && previousSourceId !== source.id) {
      await this.stripe.customers.deleteSource(customerId, previousSourceId).catch(() => undefined);
    }
    return {
      sourceId: source.id,
      brand: BRANDS[source.brand] ?? source.brand.toLowerCase(),
      last4: source.last4,
      expMonth: source.exp_month,
      expYear: source.exp_year,
    };
  }

  async retrieveSubscription(id: string): Promise<SubscriptionState | undefined> {
    try {
      const sub = (await this.stripe.subscriptions.retrieve(id)) as ProviderSubscription;
      return sub.status === 'canceled' || sub.status === 'incomplete_expired' ? undefined : subscriptionState(sub);
    } catch (error) {
      if (isMissing(error)) return undefined;
      throw error;
    }
  }

  /** A new subscription, paid at once from the default card; a decline leaves none behind. */
  async createSubscription(customerId: string, priceId: string, organisationId: string, planId: string): Promise<SubscriptionState> {
    const sub = (await this.stripe.subscriptions.create({
      customer: customerId,
      items: [{ price: priceId }],
      payment_behavior: 'error_if_incomplete',
      metadata: { fermiwell_organisation: organisationId, fermiwell_plan: planId },
      expand: ['latest_invoice'],
    })) as ProviderSubscription;
    return subscriptionState(sub);
  }

  /** Upgrade: the new price from now, a new period starting now, charged at once in full. */
  async upgradeSubscription(state: SubscriptionState, priceId: string, planId: string): Promise<SubscriptionState> {
    const params: Stripe.SubscriptionUpdateParams = {
      items: [{ id: state.itemId, price: priceId }],
      // the SDK's type of this field is incomplete in 23.1.0 ('now' is the documented value)
      billing_cycle_anchor: 'now' as unknown as Stripe.SubscriptionUpdateParams['billing_cycle_anchor'],
      proration_behavior: 'none',
      payment_behavior: 'error_if_incomplete',
      cancel_at_period_end: false,
      metadata: { fermiwell_plan: planId },
      expand: ['latest_invoice'],
    };
    const sub = (await this.stripe.subscriptions.update(state.id, params)) as ProviderSubscription;
    return subscriptionState(sub);
  }

  /** Downgrade: the cheaper price from the next period on, nothing charged or credited now. */
  async schedulePrice(state: SubscriptionState, priceId: string, planId: string): Promise<SubscriptionState> {
    const sub = (await this.stripe.subscriptions.update(state.id, {
      items: [{ id: state.itemId, price: priceId }],
      proration_behavior: 'none',
      cancel_at_period_end: false,
      metadata: { fermiwell_plan: planId },
    })) as ProviderSubscription;
    return subscriptionState(sub);
  }

  async setCancelAtPeriodEnd(state: SubscriptionState, cancel: boolean): Promise<SubscriptionState> {
    return subscriptionState((await this.stripe.subscriptions.update(state.id, { cancel_at_period_end: cancel })) as ProviderSubscription);
  }

  /** Ends a subscription now (used when a cancellation at period end fell due). Missing = already gone. */
  async cancelSubscription(id: string): Promise<void> {
    try {
      await this.stripe.subscriptions.cancel(id);
    } catch (error) {
      if (!isMissing(error)) throw error;
    }
  }

  /** Verifies a webhook's Stripe-Signature over the raw body; throws when it does not match or is too old. */
  constructEvent(rawBody: Buffer, signature: string, secret: string): Stripe.Event {
    return this.stripe.webhooks.constructEvent(rawBody, signature, secret);
  }
}

export function createPaymentProvider(config: Config): PaymentProvider | undefined {
  return config.STRIPE_SECRET_KEY ? new PaymentProvider(config.STRIPE_SECRET_KEY, config.STRIPE_API_URL) : undefined;
}
