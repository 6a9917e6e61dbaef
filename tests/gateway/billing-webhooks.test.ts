/**
 * The payment provider's webhook (POST /v1/billing/webhooks) against a real gateway: events signed
 * with the webhook secret the way the provider signs them (stripe.webhooks.generateTestHeaderString;
 * the payments fake sends none), about a subscription the product made at the fake. A valid event is
 * applied once; the same event again changes nothing; a tampered body, a foreign secret, a stale
 * timestamp (a replayed old delivery) or a missing header are refused with 400 and change nothing.
 * Subscription and invoice events move the plan, mirror invoices and send receipt and
 * payment-failure mails.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { waitForMail, mailsTo } from '../support/mail.js';
import { CARDS, fakeStripe, futureExpiry, postWebhook, signedEvent } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let db: Knex;
let owner: TestUser;
let client: Client;
let org: { id: string; name: string };
let subscriptionId: string;
let customerId: string;
const priceOf: Record<string, string> = {};

const planOf = async () => (await db('organisations').where({ id: org.id }).first()).plan_id as string;
const eventCount = async () => Number((await db('billing_events').count({ n: '*' }).first())?.n ?? 0);

/** The provider's current subscription object, changed as the test says (what an event would carry). */
async function subscriptionObject(changes: Record<string, unknown> = {}, price?: string): Promise<Record<string, any>> {
  const sub = JSON.parse(JSON.stringify(await fakeStripe().subscriptions.retrieve(subscriptionId))) as Record<string, any>;
  if (price) sub['items'].data[0].price = { ...sub['items'].data[0].price, id: price };
  return { ...sub, ...changes };
}

function invoiceObject(id: string, status: 'paid' | 'open', amount: number, price: string): Record<string, unknown> {
  const now = Math.floor(Date.now() / 1000);
  return {
    id,
    object: 'invoice',
    customer: customerId,
    number: `PROV-${id.slice(-6).toUpperCase()}`,
    status,
    currency: 'usd',
    amount_due: amount,
    amount_paid: status === 'paid' ? amount : 0,
    period_start: now,
    period_end: now,
    lines: { object: 'list', data: [{ id: 'il_1', object: 'line_item', description: '1 × Fermiwell Group (at $49.00 / month)', amount, period: { start: now, end: now + 30 * 86_400 }, pricing: { price_details: { price } } }] },
    metadata: {},
  };
}

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
  owner = await makeUser(db, 'hook-owner');
  org = await makeOrganisation(db, [[owner, 'owner']], 'hooks');
  client = new Client(gateway.url);
  await client.signIn(owner.email, owner.password);
  assert.equal((await client.call('PUT', `/v1/organisations/${org.id}/billing/card`, { number: CARDS.visa, ...futureExpiry() })).status, 200);
  const subscribed = await client.call('PUT', `/v1/organisations/${org.id}/billing/plan`, { plan: 'group' });
  assert.equal(subscribed.status, 200, JSON.stringify(subscribed.body));
  const row = await db('subscriptions').where({ organisation_id: org.id }).first();
  subscriptionId = row.provider_subscription_id;
  customerId = (await db('billing_customers').where({ organisation_id: org.id }).first()).provider_customer_id;
  for (const plan of await db('plans').select('id', 'provider_price_id')) priceOf[plan.id] = plan.provider_price_id;
  await waitForMail(owner.email, { subject: /^Receipt/ });
});

after(async () => {
  await gateway.close();
  await db.destroy();
});

describe('signatures', () => {
  test('a tampered body (signed for another body) is refused with 400 and changes nothing', async () => {
    const genuine = signedEvent('customer.subscription.deleted', await subscriptionObject());
    const tampered = { ...genuine, payload: genuine.payload.replace('"customer.subscription.deleted"', '"customer.subscription.deleted" ') };
    const before = await eventCount();
    const answer = await postWebhook(gateway.url, tampered);
    assert.equal(answer.status, 400);
    assert.equal(answer.body.type, '/problems/invalid-webhook-signature');
    assert.equal(await planOf(), 'group');
    assert.equal(await eventCount(), before);
  });

  test('an event signed with another secret, or without a signature, is refused', async () => {
    const foreign = signedEvent('customer.subscription.deleted', await subscriptionObject(), { secret: 'whsec_not_ours_at_all_0123456789' });
    assert.equal((await postWebhook(gateway.url, foreign)).status, 400);
    const unsigned = await fetch(`${gateway.url}/v1/billing/webhooks`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: foreign.payload });
    assert.equal(unsigned.status, 400);
    assert.equal(await planOf(), 'group');
  });

  test('a replayed old delivery (signature timestamp older than the 5-minute tolerance) is refused', async () => {
    const old = signedEvent('customer.subscription.deleted', await subscriptionObject(), { timestamp: Math.floor(Date.now() / 1000) - 3_600 });
    const answer = await postWebhook(gateway.url, old);
    assert.equal(answer.status, 400);
    assert.match(answer.body.detail, /tolerance|timestamp/i);
    assert.equal(await planOf(), 'group');
  });
});

describe('events', () => {
  test('invoice.paid: mirrored once with source "provider", one receipt; the same event again changes nothing', async () => {
    const invoiceId = `in_test_${Date.now()}`;
    const event = signedEvent('invoice.paid', invoiceObject(invoiceId, 'paid', 4_900, priceOf['group']!));
    const receiptsBefore = (await mailsTo(owner.email)).filter((m) => /^Receipt/.test(m.subject)).length;
    const first = await postWebhook(gateway.url, event);
    assert.equal(first.status, 200, JSON.stringify(first.body));
    assert.deepEqual([first.body.received, first.body.duplicate, first.body.outcome], [true, false, 'applied']);
    const row = await db('invoices').where({ provider_invoice_id: invoiceId }).first();
    assert.equal(row.source, 'provider');
    assert.equal(row.status, 'paid');
    assert.equal(row.amount_cents, 4_900);
    assert.equal(row.plan_id, 'group');
    assert.equal(row.number, `PROV-${invoiceId.slice(-6).toUpperCase()}`);
    await waitForMail(owner.email, { subject: new RegExp(`^Receipt ${row.number}`) });

    const again = await postWebhook(gateway.url, event);
    assert.equal(again.status, 200);
    assert.equal(again.body.duplicate, true);
    assert.equal((await db('invoices').where({ provider_invoice_id: invoiceId })).length, 1);
    await new Promise((r) => setTimeout(r, 1_500)); // give a wrongly sent second receipt time to arrive
    assert.equal((await mailsTo(owner.email)).filter((m) => /^Receipt/.test(m.subject)).length, receiptsBefore + 1);
  });

  test('invoice.payment_failed: the invoice is open, the subscription past due, the owners are told; the plan stays', async () => {
    const invoiceId = `in_fail_${Date.now()}`;
    const answer = await postWebhook(gateway.url, signedEvent('invoice.payment_failed', invoiceObject(invoiceId, 'open', 4_900, priceOf['group']!)));
    assert.equal(answer.status, 200);
    assert.equal((await db('invoices').where({ provider_invoice_id: invoiceId }).first()).status, 'open');
    assert.equal((await db('subscriptions').where({ organisation_id: org.id }).first()).status, 'past_due');
    assert.equal(await planOf(), 'group');
    const mail = await waitForMail(owner.email, { subject: /^Payment failed/ });
    assert.match(mail.text, /49\.00 USD/);
  });

  test('customer.subscription.updated to a more expensive price applies at once; an older event after it is ignored', async () => {
    const newer = signedEvent('customer.subscription.updated', await subscriptionObject({ status: 'active' }, priceOf['facility']), { created: Math.floor(Date.now() / 1000) });
    const answer = await postWebhook(gateway.url, newer);
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    assert.equal(answer.body.outcome, 'applied');
    assert.equal(await planOf(), 'facility');
    assert.equal((await client.get(`/v1/organisations/${org.id}/billing`)).body.subscription.status, 'active');

    const older = signedEvent('customer.subscription.updated', await subscriptionObject({ status: 'active' }, priceOf['group']), { created: Math.floor(Date.now() / 1000) - 600 });
    const ignored = await postWebhook(gateway.url, older);
    assert.equal(ignored.status, 200);
    assert.equal(ignored.body.outcome, 'ignored');
    assert.equal(await planOf(), 'facility');
  });

  test('customer.subscription.updated to a cheaper price waits for the period end', async () => {
    const answer = await postWebhook(gateway.url, signedEvent('customer.subscription.updated', await subscriptionObject({ status: 'active' }, priceOf['group'])));
    assert.equal(answer.status, 200);
    assert.equal(await planOf(), 'facility');
    assert.equal((await db('subscriptions').where({ organisation_id: org.id }).first()).scheduled_plan_id, 'group');
  });

  test('customer.subscription.deleted: back to Free at once, once', async () => {
    const event = signedEvent('customer.subscription.deleted', await subscriptionObject({ status: 'canceled' }));
    const answer = await postWebhook(gateway.url, event);
    assert.equal(answer.status, 200);
    assert.equal(await planOf(), 'free');
    assert.equal(await db('subscriptions').where({ organisation_id: org.id }).first(), undefined);
    const audit = await db('audit_log').where({ organisation_id: org.id, action: 'plan.changed' }).orderBy('id', 'desc').first();
    assert.deepEqual([audit.details.from, audit.details.to], ['facility', 'free']);
    assert.equal((await postWebhook(gateway.url, event)).body.duplicate, true);
  });

  test('events of unknown customers and of types billing ignores are acknowledged (200) so the provider stops retrying', async () => {
    const stranger = await postWebhook(gateway.url, signedEvent('invoice.paid', { ...invoiceObject(`in_x_${Date.now()}`, 'paid', 100, 'price_x'), customer: 'cus_nobody' }));
    assert.equal(stranger.status, 200);
    assert.equal(stranger.body.outcome, 'unknown-organisation');
    const other = await postWebhook(gateway.url, signedEvent('charge.refunded', { id: 'ch_1', object: 'charge', customer: customerId }));
    assert.equal(other.status, 200);
    assert.equal(other.body.outcome, 'ignored');
  });
});
