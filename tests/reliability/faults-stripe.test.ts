/**
 * The payments provider down (STRIPE_API_URL pointing at a closed loopback port): plan and card
 * changes fail cleanly with 503 payments-unavailable problem+json and change nothing (plan,
 * subscription, card), while evaluation with the organisation's key goes on as usual.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser } from '../support/accounts.js';
import { expectProblem } from '../support/api.js';
import { CARDS, evaluateBatch, futureExpiry } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import { KeyService } from '../../gateway/keys/service.js';
import type { RunningGateway } from '../../gateway/server.js';
import { freePort } from './support/gateway-process.js';

let gateway: RunningGateway;
let db: Knex;
let keys: KeyService;

before(async () => {
  // a port nothing listens on: every call to the provider is refused
  gateway = await startTestGateway({ STRIPE_API_URL: `http://127.0.0.1:${await freePort()}` });
  db = createDb(testDatabaseUrl(), 2);
  keys = new KeyService(db);
});
after(async () => {
  await gateway.close();
  await keys.close();
  await db.destroy();
});

test('payments provider down: plan and card changes answer 503 problem+json and change nothing; evaluation unaffected', async (t) => {
  const owner = await makeUser(db, 'stripe-down');
  const org = await makeOrganisation(db, [[owner, 'owner']], 'stripe-down');
  const client = new Client(gateway.url);
  assert.equal((await client.signIn(owner.email, owner.password)).status, 200);
  const token = (await keys.create({ organisationId: org.id, name: 'stripe down', scopes: ['eos:evaluate'] })).token;
  const before = await db('organisations').where({ id: org.id }).first();
  const billingRows = async () => ({
    subscriptions: Number((await db('subscriptions').where({ organisation_id: org.id }).count({ n: '*' }).first())?.n),
    customers: Number((await db('billing_customers').where({ organisation_id: org.id }).count({ n: '*' }).first())?.n),
  });
  const rowsBefore = await billingRows();

  const billing = `/v1/organisations/${org.id}/billing`;
  const started = Date.now();
  const plan = await client.call('PUT', `${billing}/plan`, { plan: 'group' });
  const card = await client.call('PUT', `${billing}/card`, { number: CARDS.visa, ...futureExpiry() });
  t.diagnostic(`provider down: PUT plan → ${plan.status} ${plan.body?.type}, PUT card → ${card.status} ${card.body?.type} in ${Date.now() - started} ms together`);
  for (const answer of [plan, card]) {
    const problem = await expectProblem({ status: answer.status, headers: answer.headers, body: answer.body }, 503, 'payments-unavailable');
    assert.match(problem['detail'], /Try again/);
  }

  const after = await db('organisations').where({ id: org.id }).first();
  assert.equal(after.plan_id, 'free', 'the plan did not change');
  assert.deepEqual(after, before, 'nothing about the organisation changed');
  assert.deepEqual(await billingRows(), rowsBefore, 'no subscription or customer rows written');

  // evaluation does not touch the provider
  const evaluations = await Promise.all(Array.from({ length: 5 }, () => evaluateBatch(gateway.url, token, 10)));
  assert.deepEqual(evaluations.map((e) => e.status), [200, 200, 200, 200, 200]);
});
