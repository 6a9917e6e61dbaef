/**
 * Plans and billing against a real gateway, the test database, the running payments fake (the
 * official Stripe SDK through STRIPE_API_URL) and the mail catcher: the catalogue is mirrored at
 * the provider; only owners change the plan or the card; a declined card changes nothing; a
 * subscription makes its limits apply at once (a batch refused before is accepted after, on this
 * instance at once and on another within the key cache's lifetime); upgrades charge at once,
 * downgrades and cancellations wait for the period end; invoices are listed and receipts and
 * payment-failure mails are sent. DESIGN.md §6 is the source of the plan values.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { expectProblem } from '../support/api.js';
import { mailsTo, waitForMail } from '../support/mail.js';
import { CARDS, evaluateBatch, fakeStripe, futureExpiry } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import { CACHE_TTL_MS, KeyService } from '../../gateway/keys/service.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let second: RunningGateway;
let db: Knex;
let keyService: KeyService;
const people = {} as Record<'owner' | 'maintainer' | 'developer' | 'viewer', TestUser>;
const clients = {} as Record<keyof typeof people, Client>;
let org: { id: string; name: string };
let token: string;

const billing = () => `/v1/organisations/${org.id}/billing`;
const asJson = (answer: { status: number; body: any; headers: Headers }) => ({ status: answer.status, headers: answer.headers, body: answer.body });

before(async () => {
  gateway = await startTestGateway();
  second = await startTestGateway();
  db = createDb(testDatabaseUrl(), 3);
  keyService = new KeyService(db);
  for (const role of ['owner', 'maintainer', 'developer', 'viewer'] as const) people[role] = await makeUser(db, `billing-${role}`);
  org = await makeOrganisation(db, (['owner', 'maintainer', 'developer', 'viewer'] as const).map((r) => [people[r], r]), 'billing');
  for (const role of ['owner', 'maintainer', 'developer', 'viewer'] as const) {
    clients[role] = new Client(gateway.url);
    assert.equal((await clients[role].signIn(people[role].email, people[role].password)).status, 200);
  }
  token = (await keyService.create({ organisationId: org.id, name: 'billing test key', scopes: ['eos:evaluate'] })).token;
});

after(async () => {
  await keyService.close();
  await gateway.close();
  await second.close();
  await db.destroy();
});

describe('the plan catalogue', () => {
  test('GET /v1/plans lists Free, Group and Facility with the limits of DESIGN.md §6', async () => {
    const res = await fetch(`${gateway.url}/v1/plans`);
    assert.equal(res.status, 200);
    const { items } = (await res.json()) as { items: any[] };
    assert.deepEqual(
      items.map((p) => [p.id, p.priceCents, p.currency, p.pointsPerMonth, p.requestsPerSecond, p.maxBatch, p.tableBuildsPerMonth]),
      [
        ['free', 0, 'usd', 2_000_000, 10, 10_000, 1],
        ['group', 4_900, 'usd', 500_000_000, 100, 1_000_000, 20],
        ['facility', 49_000, 'usd', 20_000_000_000, 1_000, 5_000_000, null],
      ],
    );
  });

  test('each plan has a product and a monthly price at the provider, mirrored in the plans table', async () => {
    // the gateway syncs the catalogue at start; a billing read waits for it
    assert.equal((await clients.viewer.get(billing())).status, 200);
    const stripe = fakeStripe();
    for (const row of await db('plans').select('*').orderBy('sort')) {
      assert.equal(row.provider_product_id, `fermiwell_plan_${row.id}`);
      const price = await stripe.prices.retrieve(row.provider_price_id);
      assert.equal(price.product, row.provider_product_id);
      assert.equal(price.unit_amount, row.price_cents);
      assert.equal(price.recurring?.interval, 'month');
    }
  });
});

describe('who may do what', () => {
  test('every member reads the billing overview; it starts on Free with no card', async () => {
    for (const role of ['viewer', 'developer', 'maintainer', 'owner'] as const) {
      const answer = await clients[role].get(billing());
      assert.equal(answer.status, 200, `${role}: ${JSON.stringify(answer.body)}`);
      assert.equal(answer.body.plan.id, 'free');
      assert.equal(answer.body.subscription, null);
      assert.equal(answer.body.card, null);
      assert.equal(answer.body.testMode, true);
      assert.deepEqual(answer.body.changePolicy, { upgrade: 'now', downgrade: 'period-end' });
      assert.ok(answer.body.testCards.some((c: any) => c.number === '4242424242424242'));
    }
  });

  test('maintainers, developers and viewers may change neither the plan nor the card (403, nothing changes)', async () => {
    for (const role of ['maintainer', 'developer', 'viewer'] as const) {
      const plan = await clients[role].call('PUT', `${billing()}/plan`, { plan: 'group' });
      const body = await expectProblem(asJson(plan), 403, 'forbidden');
      assert.equal(body['action'], 'billing.manage');
      const card = await clients[role].call('PUT', `${billing()}/card`, { number: CARDS.visa, ...futureExpiry() });
      await expectProblem(asJson(card), 403, 'forbidden');
    }
    assert.equal((await db('organisations').where({ id: org.id }).first()).plan_id, 'free');
    assert.equal(await db('billing_customers').where({ organisation_id: org.id }).first(), undefined);
  });

  test('an outsider does not even see the organisation (404)', async () => {
    const outsider = await makeUser(db, 'billing-outsider');
    const client = new Client(gateway.url);
    await client.signIn(outsider.email, outsider.password);
    assert.equal((await client.get(billing())).status, 404);
    assert.equal((await client.call('PUT', `${billing()}/plan`, { plan: 'group' })).status, 404);
  });
});

describe('card entry (test mode)', () => {
  test('a number that is not a test card is refused, and never repeated back', async () => {
    const realLooking = '4111 1111 1111 1111';
    const answer = await clients.owner.call('PUT', `${billing()}/card`, { number: realLooking, ...futureExpiry() });
    const body = await expectProblem(asJson(answer), 400, 'not-a-test-card');
    assert.ok(!JSON.stringify(body).includes('4111111111111111') && !JSON.stringify(body).includes(realLooking));
  });

  test('an expired date and a malformed CVC are refused with the field named', async () => {
    const expired = await clients.owner.call('PUT', `${billing()}/card`, { number: CARDS.visa, expMonth: 1, expYear: 2001, cvc: '123' });
    assert.equal(expired.status, 400);
    const cvc = await clients.owner.call('PUT', `${billing()}/card`, { number: CARDS.visa, expMonth: 12, expYear: 2031, cvc: '12x' });
    assert.equal(cvc.status, 400);
    assert.equal(cvc.body.errors[0].field, 'cvc');
  });

  test('without a card, a paid plan is refused (card-required) and nothing changes', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'group' });
    await expectProblem(asJson(answer), 409, 'card-required');
    assert.equal((await db('organisations').where({ id: org.id }).first()).plan_id, 'free');
    assert.equal(await db('subscriptions').where({ organisation_id: org.id }).first(), undefined);
  });

  test('a declined card (4000 0000 0000 0002): 402 with the reason, no card saved here or at the provider', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/card`, { number: CARDS.declined, ...futureExpiry() });
    const body = await expectProblem(asJson(answer), 402, 'payment-declined');
    assert.match(body['detail'], /declined/);
    assert.match(body['detail'], /No card was saved/);
    const row = await db('billing_customers').where({ organisation_id: org.id }).first();
    assert.equal(row.card_source_id, null);
    const customer = (await fakeStripe().customers.retrieve(row.provider_customer_id, { expand: ['sources'] })) as any;
    assert.equal(customer.default_source, null);
    assert.equal(customer.sources.data.length, 0);
    assert.equal((await clients.owner.get(billing())).body.card, null);
  });

  test('a good card (4242 4242 4242 4242) is saved at the provider; only brand and last four digits are kept', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/card`, { number: CARDS.visa, ...futureExpiry() });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    assert.equal(answer.body.card.brand, 'visa');
    assert.equal(answer.body.card.last4, '4242');
    const row = await db('billing_customers').where({ organisation_id: org.id }).first();
    assert.ok(!JSON.stringify(row).includes('4242424242424242'), 'no card number at rest');
    const customer = (await fakeStripe().customers.retrieve(row.provider_customer_id)) as any;
    assert.equal(customer.default_source, row.card_source_id);
    assert.equal(customer.metadata.fermiwell_organisation, org.id);
    const audit = await db('audit_log').where({ organisation_id: org.id, action: 'billing.card-changed' }).first();
    assert.equal(audit.actor_user_id, people.owner.id);
  });
});

describe('subscribe, upgrade, downgrade, cancel', () => {
  test('subscribe Free → Group: active at once; a batch over the Free limit refused before is accepted after', async () => {
    const over = 10_001; // Free's largest batch is 10 000 points (DESIGN.md §6)
    const before = await evaluateBatch(gateway.url, token, over);
    assert.equal(before.status, 413, JSON.stringify(before));
    assert.equal(before.type, '/problems/batch-too-large');
    // the plan by its name and the numbers grouped as the dashboard writes them
    assert.match(before.detail ?? '', /^This batch has 10,001 points; the Free plan accepts at most 10,000 per request\./);
    const beforeOther = await evaluateBatch(second.url, token, over);
    assert.equal(beforeOther.status, 413); // the other instance has the key cached with the Free plan now

    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'group' });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    const { billing: view, change } = answer.body;
    assert.equal(change.effective, 'now');
    assert.equal(view.plan.id, 'group');
    assert.equal(view.subscription.status, 'active');
    assert.equal(view.subscription.atProvider, true);
    const start = Date.parse(view.subscription.currentPeriodStart);
    const end = Date.parse(view.subscription.currentPeriodEnd);
    assert.ok(Math.abs(start - Date.now()) < 120_000, 'the period starts now');
    assert.ok(end - start >= 28 * 86_400_000 && end - start <= 31 * 86_400_000, 'a monthly period');
    assert.equal(change.invoice.amountCents, 4_900);
    assert.equal(change.invoice.status, 'paid');

    // this instance: at once
    assert.equal((await evaluateBatch(gateway.url, token, over)).status, 200);
    // another instance: within its key cache's lifetime (bounded wait, not a timing assertion)
    const deadline = Date.now() + CACHE_TTL_MS + 5_000;
    let other = await evaluateBatch(second.url, token, over);
    while (other.status !== 200 && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 250));
      other = await evaluateBatch(second.url, token, over);
    }
    assert.equal(other.status, 200, JSON.stringify(other));

    // at the provider: a subscription on the Group price, tagged with the organisation
    const sub = await db('subscriptions').where({ organisation_id: org.id }).first();
    const atProvider = await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id);
    assert.equal(atProvider.status, 'active');
    assert.equal(atProvider.items.data[0]!.price.id, (await db('plans').where({ id: 'group' }).first()).provider_price_id);
    assert.equal(atProvider.metadata['fermiwell_organisation'], org.id);
  });

  test('the invoice is listed (recorded by Fermiwell: the fake keeps none) and the owner gets a receipt', async () => {
    const list = await clients.viewer.get(`${billing()}/invoices`);
    assert.equal(list.status, 200);
    assert.equal(list.body.items.length, 1);
    const [invoice] = list.body.items;
    assert.equal(invoice.source, 'fermiwell');
    assert.equal(invoice.plan, 'group');
    assert.equal(invoice.amountCents, 4_900);
    assert.equal(invoice.currency, 'usd');
    assert.match(invoice.number, /^FW-/);
    const one = await clients.viewer.get(`${billing()}/invoices/${invoice.id}`);
    assert.deepEqual(one.body, invoice);
    const row = await db('invoices').where({ id: invoice.id }).first();
    assert.match(row.provider_charge_id, /^ch_/, 'the provider charge behind it is kept');
    const receipt = await waitForMail(people.owner.email, { subject: /^Receipt FW-/ });
    assert.match(receipt.text, /49\.00 USD/);
    assert.match(receipt.text, /charged to the Visa ending 4242/);
    assert.equal((await mailsTo(people.viewer.email)).length, 0, 'billing mail goes to owners only');
  });

  test('upgrade Group → Facility: at once, a new period, the full Facility price charged', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'facility' });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    assert.equal(answer.body.change.effective, 'now');
    assert.equal(answer.body.billing.plan.id, 'facility');
    assert.equal(answer.body.change.invoice.amountCents, 49_000);
    assert.equal((await db('organisations').where({ id: org.id }).first()).plan_id, 'facility');
    assert.equal((await clients.owner.get(`${billing()}/invoices`)).body.items.length, 2);
    await waitForMail(people.owner.email, { subject: /^Receipt FW-/, count: 2 });
  });

  test('downgrade Facility → Group: scheduled for the period end, Facility limits until then, nothing charged', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'group' });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    const { billing: view, change } = answer.body;
    assert.equal(change.effective, 'period-end');
    assert.equal(change.effectiveAt, view.subscription.currentPeriodEnd);
    assert.equal(change.invoice, null);
    assert.equal(view.plan.id, 'facility');
    assert.equal(view.subscription.scheduledPlan, 'group');
    assert.equal((await db('organisations').where({ id: org.id }).first()).plan_id, 'facility');
    assert.equal((await clients.owner.get(`${billing()}/invoices`)).body.items.length, 2, 'no new invoice');
    // the provider bills the Group price from the next period
    const sub = await db('subscriptions').where({ organisation_id: org.id }).first();
    const atProvider = await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id);
    assert.equal(atProvider.items.data[0]!.price.id, (await db('plans').where({ id: 'group' }).first()).provider_price_id);
  });

  test('choosing the current plan again withdraws the scheduled downgrade', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'facility' });
    assert.equal(answer.status, 200);
    assert.equal(answer.body.billing.subscription.scheduledPlan, null);
    assert.equal(answer.body.billing.plan.id, 'facility');
    assert.equal((await clients.owner.get(`${billing()}/invoices`)).body.items.length, 2, 'withdrawing charges nothing');
  });

  test('when the period ends, the scheduled downgrade takes over and the new limits apply', async () => {
    assert.equal((await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'group' })).status, 200);
    // the period ends (moved into the past instead of waiting a month)
    await db('subscriptions').where({ organisation_id: org.id }).update({ current_period_start: db.raw("now() - interval '31 days'"), current_period_end: db.raw("now() - interval '1 second'") });
    const view = (await clients.viewer.get(billing())).body;
    assert.equal(view.plan.id, 'group');
    assert.equal(view.subscription.scheduledPlan, null);
    assert.ok(Date.parse(view.subscription.currentPeriodEnd) > Date.now(), 'the next period has begun');
    const audit = await db('audit_log').where({ organisation_id: org.id, action: 'plan.changed' }).orderBy('id', 'desc').first();
    assert.deepEqual([audit.details.from, audit.details.to, audit.details.effective], ['facility', 'group', 'period-end']);
  });

  test('cancel (→ Free): at the period end; then Free limits again and the provider subscription ends', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'free' });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    assert.equal(answer.body.change.effective, 'period-end');
    assert.equal(answer.body.billing.subscription.cancelAtPeriodEnd, true);
    assert.equal(answer.body.billing.subscription.scheduledPlan, 'free');
    assert.equal(answer.body.billing.plan.id, 'group');
    const sub = await db('subscriptions').where({ organisation_id: org.id }).first();
    assert.equal((await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id)).cancel_at_period_end, true);
    assert.equal((await evaluateBatch(gateway.url, token, 10_001)).status, 200, 'Group limits until the period ends');

    await db('subscriptions').where({ organisation_id: org.id }).update({ current_period_end: db.raw("now() - interval '1 second'") });
    const view = (await clients.owner.get(billing())).body;
    assert.equal(view.plan.id, 'free');
    assert.equal(view.subscription, null);
    assert.equal((await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id)).status, 'canceled');
    const refused = await evaluateBatch(gateway.url, token, 10_001);
    assert.equal(refused.status, 413);
    assert.equal(refused.type, '/problems/batch-too-large');
  });

  test('a card that attaches but cannot be charged (…0341): 402, the plan stays Free, no invoice, a payment-failure mail', async () => {
    assert.equal((await clients.owner.call('PUT', `${billing()}/card`, { number: CARDS.chargeFails, ...futureExpiry() })).status, 200);
    const invoicesBefore = (await db('invoices').where({ organisation_id: org.id })).length;
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'group' });
    const body = await expectProblem(asJson(answer), 402, 'payment-declined');
    assert.match(body['detail'], /The plan stays Free/);
    assert.equal((await db('organisations').where({ id: org.id }).first()).plan_id, 'free');
    assert.equal(await db('subscriptions').where({ organisation_id: org.id }).first(), undefined);
    assert.equal((await db('invoices').where({ organisation_id: org.id })).length, invoicesBefore);
    const mail = await waitForMail(people.owner.email, { subject: /^Payment failed/ });
    assert.match(mail.text, /49\.00 USD/);
    assert.match(mail.text, /The plan stays Free/);
  });

  test('an unknown plan is a 400 naming the plans', async () => {
    const answer = await clients.owner.call('PUT', `${billing()}/plan`, { plan: 'platinum' });
    const body = await expectProblem(asJson(answer), 400, 'invalid-request');
    assert.match(body['detail'], /free, group, facility/);
  });
});

describe('GraphQL', () => {
  test('the billing overview and invoices through the account graph; a viewer cannot change the plan', async () => {
    const query = `query($id: ID!) { organisation(id: $id) { billing { plan { id maxBatch } testMode changePolicy { upgrade downgrade } plans { id priceCents pointsPerMonth tableBuildsPerMonth } } invoices { number source amountCents } } plans { id } }`;
    const answer = await clients.viewer.graphql(query, { id: org.id });
    assert.equal(answer.errors, undefined, JSON.stringify(answer.errors));
    const billingAnswer = answer.data.organisation.billing;
    assert.equal(billingAnswer.plan.id, 'free');
    assert.equal(billingAnswer.plans.find((p: any) => p.id === 'facility').pointsPerMonth, 20_000_000_000);
    assert.deepEqual(billingAnswer.changePolicy, { upgrade: 'now', downgrade: 'period-end' });
    assert.equal(answer.data.organisation.invoices.length, (await clients.viewer.get(`${billing()}/invoices`)).body.items.length);
    assert.deepEqual(answer.data.plans.map((p: any) => p.id), ['free', 'group', 'facility']);

    const denied = await clients.viewer.graphql(`mutation($id: ID!) { changePlan(organisationId: $id, plan: "group") { change { effective } } }`, { id: org.id });
    assert.equal(denied.errors?.[0]?.extensions?.code, 'forbidden');
  });
});

describe('deleting a paying organisation', () => {
  test('ends its subscription at the provider first, so nothing goes on being charged', async () => {
    const owner = await makeUser(db, 'billing-leaver');
    const leaving = await makeOrganisation(db, [[owner, 'owner']], 'billing-leaving');
    const client = new Client(gateway.url);
    assert.equal((await client.signIn(owner.email, owner.password)).status, 200);
    const base = `/v1/organisations/${leaving.id}/billing`;
    assert.equal((await client.call('PUT', `${base}/card`, { number: CARDS.visa, ...futureExpiry() })).status, 200);
    assert.equal((await client.call('PUT', `${base}/plan`, { plan: 'group' })).status, 200);
    const sub = await db('subscriptions').where({ organisation_id: leaving.id }).first();
    assert.equal((await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id)).status, 'active');

    assert.equal((await client.delete(`/v1/organisations/${leaving.id}`)).status, 204);
    assert.equal((await fakeStripe().subscriptions.retrieve(sub.provider_subscription_id)).status, 'canceled');
    assert.equal(await db('organisations').where({ id: leaving.id }).first(), undefined);
  });
});
