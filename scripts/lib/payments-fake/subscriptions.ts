/**
 * What the payments fake (stripe-stateful-mock) lacks and the product needs, added in front of it:
 * subscriptions made from `price` items, their update (price change, a new period from now,
 * cancel at period end) and their cancellation, in the shapes of Stripe's API (the period on the
 * subscription item, as current API versions have it, and on the subscription too, as older ones
 * did). A paid period is charged through the fake's own charges on the customer's default card, so
 * its test cards decline here as they do there (tok_chargeCustomerFail attaches, then fails to
 * charge). The fake has no invoices and sends no events: `latest_invoice` stays null and the
 * product records its own invoices (gateway/billing). Test and local use only; never product code.
 */
import { randomBytes } from 'node:crypto';
import express, { Router, type Request, type Response, type NextFunction } from 'express';
import type { MockInternals, RestErrorLike } from './internals.js';

const ACCOUNT = 'acct_default';
const id = (prefix: string) => `${prefix}_${randomBytes(10).toString('hex')}`;
const nowSeconds = () => Math.floor(Date.now() / 1000);

function monthAfter(seconds: number): number {
  const d = new Date(seconds * 1000);
  d.setUTCMonth(d.getUTCMonth() + 1);
  return Math.floor(d.getTime() / 1000);
}

interface FakeSubscription {
  id: string;
  object: 'subscription';
  customer: string;
  status: 'active' | 'canceled';
  created: number;
  start_date: number;
  billing_cycle_anchor: number;
  cancel_at_period_end: boolean;
  cancel_at: number | null;
  canceled_at: number | null;
  ended_at: number | null;
  collection_method: 'charge_automatically';
  currency: string;
  current_period_start: number;
  current_period_end: number;
  default_source: string | null;
  latest_invoice: null;
  livemode: false;
  metadata: Record<string, string>;
  items: { object: 'list'; data: FakeItem[]; has_more: false; url: string };
  /** Not Stripe's: the last charge made for this subscription (the fake has no invoices to hold it). */
  latest_charge?: string | null;
}

interface FakeItem {
  id: string;
  object: 'subscription_item';
  created: number;
  price: Record<string, unknown> & { id: string; unit_amount: number; currency: string };
  quantity: 1;
  subscription: string;
  current_period_start: number;
  current_period_end: number;
  metadata: Record<string, string>;
}

class FakeError extends Error {
  constructor(readonly statusCode: number, readonly error: Record<string, unknown>) {
    super(String(error['message']));
  }
}

const missing = (what: string, value: string, param: string) =>
  new FakeError(404, { code: 'resource_missing', message: `No such ${what}: '${value}'`, param, type: 'invalid_request_error' });

function isRestError(error: unknown): error is RestErrorLike {
  return typeof error === 'object' && error !== null && typeof (error as RestErrorLike).statusCode === 'number' && typeof (error as RestErrorLike).error === 'object';
}

/** Routes that take precedence over the fake's own (mounted before its Express app). */
export function subscriptionRoutes(mock: MockInternals): Router {
  const store = new Map<string, FakeSubscription>();
  const router = Router();
  router.use(express.urlencoded({ extended: true }));
  // the fake's own check: only test keys
  router.use((req, res, next) => {
    const auth = req.header('authorization') ?? '';
    if (!/^Bearer sk_test_/.test(auth)) {
      res.status(401).json({ error: { type: 'invalid_request_error', message: 'Invalid API Key provided (the payments fake accepts sk_test_ keys only).' } });
      return;
    }
    next();
  });

  const charge = (customer: string, price: FakeItem['price'], description: string): string | null => {
    if (!(price.unit_amount > 0)) return null;
    const made = mock.charges.create(ACCOUNT, { amount: price.unit_amount, currency: price.currency, customer, description });
    return String(made['id']);
  };

  const priceOf = (priceId: unknown): FakeItem['price'] => {
    if (typeof priceId !== 'string') throw new FakeError(400, { code: 'parameter_missing', message: 'Missing required param: items[0][price].', param: 'items[0][price]', type: 'invalid_request_error' });
    return mock.prices.retrieve(ACCOUNT, priceId, 'items[0][price]') as FakeItem['price'];
  };

  const find = (subscriptionId: string): FakeSubscription => {
    const sub = store.get(subscriptionId);
    if (!sub) throw missing('subscription', subscriptionId, 'id');
    return sub;
  };

  const setPeriod = (sub: FakeSubscription, start: number) => {
    sub.current_period_start = start;
    sub.current_period_end = monthAfter(start);
    sub.billing_cycle_anchor = start;
    for (const item of sub.items.data) {
      item.current_period_start = sub.current_period_start;
      item.current_period_end = sub.current_period_end;
    }
  };

  router.post('/v1/subscriptions', (req, res) => {
    const body = req.body as Record<string, any>;
    const customerId = String(body['customer'] ?? '');
    const customer = mock.customers.retrieve(ACCOUNT, customerId, 'customer');
    const price = priceOf(body['items']?.[0]?.['price']);
    // charged first: a declined card leaves no subscription behind (payment_behavior error_if_incomplete)
    const chargeId = charge(customerId, price, `Subscription to ${String(price['product'])}`);
    const now = nowSeconds();
    const subId = id('sub');
    const sub: FakeSubscription = {
      id: subId,
      object: 'subscription',
      customer: String(customer['id']),
      status: 'active',
      created: now,
      start_date: now,
      billing_cycle_anchor: now,
      cancel_at_period_end: false,
      cancel_at: null,
      canceled_at: null,
      ended_at: null,
      collection_method: 'charge_automatically',
      currency: price.currency,
      current_period_start: now,
      current_period_end: monthAfter(now),
      default_source: null,
      latest_invoice: null,
      livemode: false,
      metadata: { ...(body['metadata'] ?? {}) },
      items: {
        object: 'list',
        data: [{ id: id('si'), object: 'subscription_item', created: now, price, quantity: 1, subscription: subId, current_period_start: now, current_period_end: monthAfter(now), metadata: {} }],
        has_more: false,
        url: `/v1/subscription_items?subscription=${subId}`,
      },
      latest_charge: chargeId,
    };
    store.set(subId, sub);
    res.json(sub);
  });

  router.get('/v1/subscriptions/:id', (req, res) => {
    res.json(find(String(req.params['id'])));
  });

  router.get('/v1/subscriptions', (req, res) => {
    const customer = req.query['customer'];
    const data = [...store.values()].filter((s) => !customer || s.customer === customer).sort((a, b) => b.created - a.created);
    res.json({ object: 'list', data, has_more: false, url: '/v1/subscriptions' });
  });

  router.post('/v1/subscriptions/:id', (req, res) => {
    const sub = find(String(req.params['id']));
    if (sub.status === 'canceled') {
      throw new FakeError(400, { code: 'resource_missing', message: `A canceled subscription can only update its cancellation_details and metadata.`, type: 'invalid_request_error' });
    }
    const body = req.body as Record<string, any>;
    const item = body['items']?.[0];
    const newPrice = item?.['price'] !== undefined ? priceOf(item['price']) : undefined;
    const restart = body['billing_cycle_anchor'] === 'now';
    // validate and charge before changing anything: a declined card changes nothing
    let chargeId: string | null | undefined;
    if (restart) chargeId = charge(sub.customer, newPrice ?? sub.items.data[0]!.price, `Subscription to ${String((newPrice ?? sub.items.data[0]!.price)['product'])}`);
    if (newPrice) {
      sub.items.data[0]!.price = newPrice;
      sub.currency = newPrice.currency;
    }
    if (restart) {
      setPeriod(sub, nowSeconds());
      sub.latest_charge = chargeId ?? null;
    }
    if (body['cancel_at_period_end'] !== undefined) {
      sub.cancel_at_period_end = String(body['cancel_at_period_end']) === 'true';
      sub.cancel_at = sub.cancel_at_period_end ? sub.current_period_end : null;
      sub.canceled_at = sub.cancel_at_period_end ? nowSeconds() : null;
    }
    if (body['metadata']) sub.metadata = { ...sub.metadata, ...body['metadata'] };
    res.json(sub);
  });

  router.delete('/v1/subscriptions/:id', (req, res) => {
    const sub = find(String(req.params['id']));
    const now = nowSeconds();
    sub.status = 'canceled';
    sub.canceled_at ??= now;
    sub.ended_at = now;
    res.json(sub);
  });

  // The fake keeps a declined card attached (and even makes it the default) before it answers 402;
  // Stripe attaches nothing when the card is declined. Put the customer back as it was.
  router.post('/v1/customers/:id/sources', (req, res) => {
    const customerId = String(req.params['id']);
    const customer = mock.customers.retrieve(ACCOUNT, customerId, 'customer') as { sources: { data: unknown[] }; default_source: string | null };
    const before = { count: customer.sources.data.length, defaultSource: customer.default_source };
    try {
      res.json(mock.customers.createCard(ACCOUNT, customerId, req.body as Record<string, unknown>));
    } catch (error) {
      customer.sources.data.splice(before.count);
      customer.default_source = before.defaultSource;
      throw error;
    }
  });

  router.use((error: unknown, _req: Request, res: Response, next: NextFunction) => {
    if (error instanceof FakeError || isRestError(error)) {
      res.status(error.statusCode).json({ error: error.error });
      return;
    }
    if (error instanceof Error && /Unhandled source token/.test(error.message)) {
      // the fake answers 500 without an envelope for an unknown token; Stripe says it is missing
      res.status(400).json({ error: { code: 'resource_missing', message: 'No such token.', param: 'source', type: 'invalid_request_error' } });
      return;
    }
    next(error);
  });
  return router;
}
