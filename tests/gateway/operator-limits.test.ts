/**
 * The Operator API (schema/openapi-operator.yaml, schema/graphql/operator.graphql) against a real
 * gateway and database: only operators get in; every organisation with its plan, limits and usage
 * this period; overriding limits and moving plans, which applies at once to the evaluation path
 * (quota, per-key rate) and to the usage quota, and is audit-logged with the reason; validation;
 * service health; GraphQL answering as REST does. Plan values are checked against DESIGN.md §6.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { expectProblem, postJson } from '../support/api.js';
import { Client, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { readYaml, SCHEMA_DIR } from '../../gateway/docs/document.js';
import { FLUSH_INTERVAL_MS, periodStart } from '../../gateway/usage/meter.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let fx: Fixtures;
let operator: TestUser;
let owner: TestUser;
let org: { id: string; name: string };
let key: TestKey;
let operatorClient: Client;
let ownerClient: Client;
const THIS_PERIOD_POINTS = 4_000;

const doc = readYaml(path.join(SCHEMA_DIR, 'openapi-operator.yaml'));
const ajv = new Ajv2020({ strict: false, allErrors: true, validateFormats: false });
ajv.addSchema({ ...doc, $id: 'operator' });
function conforms(schema: string, value: unknown) {
  const validate = ajv.getSchema(`operator#/components/schemas/${schema}`)!;
  assert.ok(validate(value), `${schema}: ${JSON.stringify(validate.errors)}`);
}

// DESIGN.md §6 (demo plan values)
const FREE = { pointsPerMonth: 2_000_000, requestsPerSecond: 10, maxBatch: 10_000, tableBuildsPerMonth: 1 };
const GROUP = { pointsPerMonth: 500_000_000, requestsPerSecond: 100, maxBatch: 1_000_000, tableBuildsPerMonth: 20 };
const NO_OVERRIDES = { pointsPerMonth: null, requestsPerSecond: null, maxBatch: null, tableBuildsPerMonth: null };

before(async () => {
  gateway = await startTestGateway({ EOS_POOL_MIN_THREADS: '0' });
  fx = new Fixtures();
  operator = await makeUser(fx.db, 'opslimits', { platformRole: 'operator' });
  owner = await makeUser(fx.db, 'opsowner');
  org = await makeOrganisation(fx.db, [[owner, 'owner']], 'ops');
  key = await fx.key({ id: org.id, slug: '', plan: 'free', ownerId: owner.id }, { scopes: ['eos:evaluate', 'usage:read'] });
  await fx.seedUsage(org.id, THIS_PERIOD_POINTS, key.id);
  // last period's use and a recent failure burst: only the latter counts as "recent"
  const lastPeriod = new Date(periodStart() - 86_400_000);
  await fx.seedUsageRow({ organisationId: org.id, apiKeyId: key.id, endpoint: '/v1/eos/evaluate', minute: lastPeriod, requests: 9, points: 900_000, buckets: { 3: 9 } });
  await fx.seedUsageRow({ organisationId: org.id, apiKeyId: key.id, endpoint: '/v1/eos/evaluate', minute: new Date(Math.floor(Date.now() / 60_000) * 60_000 - 120_000), requests: 6, points: 0, errors: 5, buckets: { 0: 6 } });
  operatorClient = new Client(gateway.url);
  ownerClient = new Client(gateway.url);
  assert.equal((await operatorClient.signIn(operator.email, operator.password)).status, 200);
  assert.equal((await ownerClient.signIn(owner.email, owner.password)).status, 200);
});
after(async () => {
  await gateway?.close();
  await fx?.close();
});

const limitsPath = () => `/v1/operator/organisations/${org.id}/limits`;

describe('who may use the Operator API', () => {
  test('no session: 401 on every route', async () => {
    for (const p of ['/v1/operator/organisations', `/v1/operator/organisations/${org.id}`, '/v1/operator/health']) {
      await expectProblem(await fetch(gateway.url + p), 401, 'session-required');
    }
  });

  test('an organisation owner is refused, naming the platform action', async () => {
    const cases: Array<[string, Promise<any>]> = [
      ['organisations.list-all', ownerClient.get('/v1/operator/organisations')],
      ['organisations.list-all', ownerClient.get(`/v1/operator/organisations/${org.id}`)],
      ['plans.manage', ownerClient.call('PUT', limitsPath(), { plan: 'facility', reason: 'I would like more' })],
      ['platform.health', ownerClient.get('/v1/operator/health')],
    ];
    for (const [action, pending] of cases) {
      const answer = await pending;
      assert.equal(answer.status, 403, JSON.stringify(answer.body));
      assert.equal(answer.body.type, '/problems/forbidden');
      assert.equal(answer.body.action, action);
    }
    assert.equal((await fx.db('organisations').where({ id: org.id }).first()).plan_id, 'free', 'nothing changed');
  });

  test('an API key is not a session', async () => {
    await expectProblem(await fetch(`${gateway.url}/v1/operator/organisations`, { headers: { authorization: `Bearer ${key.token}` } }), 401, 'session-required');
  });
});

describe('organisations with plan, limits and usage', () => {
  test('the list shows the plan limits of DESIGN.md §6 and this period only', async () => {
    const answer = await operatorClient.get('/v1/operator/organisations');
    assert.equal(answer.status, 200);
    assert.equal(answer.body.periodStart, new Date(periodStart()).toISOString());
    const item = answer.body.items.find((o: any) => o.id === org.id);
    assert.ok(item, 'the test organisation is listed');
    conforms('OperatorOrganisation', item);
    assert.equal(item.name, org.name);
    assert.equal(item.plan, 'free');
    assert.deepEqual(item.planLimits, FREE);
    assert.deepEqual(item.limits, FREE);
    assert.equal(item.override, null);
    assert.equal(item.memberCount, 1);
    assert.equal(item.activeKeyCount, 1);
    assert.equal(item.usage.points, THIS_PERIOD_POINTS, 'last period\'s 900 000 points are not counted');
    assert.equal(item.usage.requests, 1 + 6);
    assert.equal(item.usage.errors, 5);
    assert.equal(item.usage.recentErrors, 5);
    assert.equal(item.usage.quotaFraction, THIS_PERIOD_POINTS / FREE.pointsPerMonth);
    // ordered by name
    const names = answer.body.items.map((o: any) => o.name);
    assert.deepEqual(names, [...names].sort((a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0)));
  });

  test('one organisation; an unknown one is 404', async () => {
    const answer = await operatorClient.get(`/v1/operator/organisations/${org.id}`);
    assert.equal(answer.status, 200);
    assert.equal(answer.body.id, org.id);
    await expectProblem(await operatorClient.get('/v1/operator/organisations/5d6f8a52-0000-4000-8000-000000000000').then((a) => ({ ...a })), 404, 'organisation-not-found');
    await expectProblem(await operatorClient.get('/v1/operator/organisations/not-a-uuid'), 404, 'organisation-not-found');
  });
});

describe('changing limits', () => {
  test('an override applies at once: quota on the evaluation path and in /v1/usage, per-key rate, audit log', async () => {
    const answer = await operatorClient.call('PUT', limitsPath(), {
      overrides: { pointsPerMonth: 4_500, requestsPerSecond: 3, maxBatch: null, tableBuildsPerMonth: 'unlimited' },
      reason: 'Workshop pilot, small cap agreed',
    });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    conforms('OperatorOrganisation', answer.body);
    assert.deepEqual(answer.body.limits, { pointsPerMonth: 4_500, requestsPerSecond: 3, maxBatch: FREE.maxBatch, tableBuildsPerMonth: null });
    assert.deepEqual(answer.body.planLimits, FREE);
    assert.equal(answer.body.override.tableBuildsPerMonth, 'unlimited');
    assert.equal(answer.body.override.reason, 'Workshop pilot, small cap agreed');
    assert.equal(answer.body.override.setBy.email, operator.email);
    assert.equal(answer.body.usage.quotaFraction, THIS_PERIOD_POINTS / 4_500);

    // the evaluation path: 1 000 points would pass the overridden quota (4 000 used of 4 500)
    const res = await postJson(`${gateway.url}/v1/eos/regime`, key.token, { density: Array(1_000).fill(1e6), temperature: Array(1_000).fill(1e8), composition: { mixture: 'c12-o16' }, fields: ['degeneracy'] });
    const problem = await expectProblem(res, 429, 'quota-exceeded');
    assert.equal(problem['quota'], 4_500);
    assert.equal(problem['pointsLeft'], 500);
    assert.match(res.headers.get('ratelimit-policy') ?? '', /q=3\b/, 'the per-key rate follows the override');

    // the usage quota as the dashboard reads it
    const usage = await ownerClient.get(`/v1/usage?organisationId=${org.id}`);
    assert.equal(usage.status, 200);
    assert.equal(usage.body.quota.pointsQuota, 4_500);
    assert.equal(usage.body.quota.pointsLeft, 500);

    const log = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?action=plan.changed`);
    assert.equal(log.status, 200);
    const entry = log.body.items[0];
    assert.equal(entry.actor.id, operator.id);
    assert.equal(entry.details.via, 'operator');
    assert.equal(entry.details.reason, 'Workshop pilot, small cap agreed');
    assert.deepEqual(entry.details.plan, { from: 'free', to: 'free' });
    assert.deepEqual(entry.details.limits.from, FREE);
    assert.deepEqual(entry.details.limits.to, { pointsPerMonth: 4_500, requestsPerSecond: 3, maxBatch: FREE.maxBatch, tableBuildsPerMonth: null });
  });

  test('moving to another plan and clearing the overrides gives the plan values', async () => {
    const answer = await operatorClient.call('PUT', limitsPath(), { plan: 'group', overrides: NO_OVERRIDES, reason: 'Paid by bank transfer' });
    assert.equal(answer.status, 200, JSON.stringify(answer.body));
    assert.equal(answer.body.plan, 'group');
    assert.equal(answer.body.override, null);
    assert.deepEqual(answer.body.limits, GROUP);
    assert.equal(await fx.db('organisation_limit_overrides').where({ organisation_id: org.id }).first(), undefined, 'the override row is gone');
    // and the key works again, on the Group plan's rate
    const res = await postJson(`${gateway.url}/v1/eos/regime`, key.token, { density: [1e6], temperature: [1e8], composition: { mixture: 'c12-o16' }, fields: ['degeneracy'] });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    assert.match(res.headers.get('ratelimit-policy') ?? '', /q=100\b/);
    const log = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?action=plan.changed`);
    assert.deepEqual(log.body.items[0].details.plan, { from: 'free', to: 'group' });
  });

  test('a plan move alone keeps the overrides', async () => {
    await operatorClient.call('PUT', limitsPath(), { overrides: { ...NO_OVERRIDES, maxBatch: 2_000_000 }, reason: 'Large-grid test' });
    const answer = await operatorClient.call('PUT', limitsPath(), { plan: 'facility', reason: 'Facility agreement' });
    assert.equal(answer.status, 200);
    assert.equal(answer.body.plan, 'facility');
    assert.equal(answer.body.limits.maxBatch, 2_000_000);
    assert.equal(answer.body.limits.tableBuildsPerMonth, null, 'Facility: unlimited table builds (DESIGN.md §6)');
    assert.equal(answer.body.override.maxBatch, 2_000_000);
  });

  test('invalid changes are refused with the field named, and change nothing', async () => {
    const before = (await operatorClient.get(`/v1/operator/organisations/${org.id}`)).body;
    const cases: Array<[unknown, string]> = [
      [{ plan: 'group' }, 'reason'],
      [{ plan: 'group', reason: 'no' }, 'reason'],
      [{ reason: 'nothing to change' }, 'plan'],
      [{ plan: 'platinum', reason: 'no such plan' }, 'plan'],
      [{ overrides: { ...NO_OVERRIDES, pointsPerMonth: 0 }, reason: 'zero quota' }, 'overrides.pointsPerMonth'],
      [{ overrides: { ...NO_OVERRIDES, requestsPerSecond: 2.5 }, reason: 'fraction' }, 'overrides.requestsPerSecond'],
      [{ overrides: { ...NO_OVERRIDES, maxBatch: 10_000_000_000 }, reason: 'beyond the pool' }, 'overrides.maxBatch'],
      [{ overrides: { ...NO_OVERRIDES, tableBuildsPerMonth: 'lots' }, reason: 'words' }, 'overrides.tableBuildsPerMonth'],
      [{ overrides: { pointsPerMonth: 5 }, reason: 'partial' }, 'overrides.requestsPerSecond'],
      [{ plan: 'group', reason: 'extra field', discount: 50 }, '(body)'],
    ];
    for (const [body, field] of cases) {
      const answer = await operatorClient.call('PUT', limitsPath(), body);
      await expectProblem(answer, 400, 'invalid-request');
      assert.ok(answer.body.errors.some((e: any) => e.field === field || (field === '(body)' && /discount|unrecognized/i.test(JSON.stringify(e)))), `${JSON.stringify(body)} → ${JSON.stringify(answer.body.errors)}`);
    }
    const afterwards = (await operatorClient.get(`/v1/operator/organisations/${org.id}`)).body;
    assert.deepEqual({ plan: afterwards.plan, limits: afterwards.limits, override: afterwards.override }, { plan: before.plan, limits: before.limits, override: before.override });
    await expectProblem(await operatorClient.call('PUT', '/v1/operator/organisations/5d6f8a52-0000-4000-8000-000000000000/limits', { plan: 'group', reason: 'ghost' }), 404, 'organisation-not-found');
  });
});

describe('service health', () => {
  test('readiness as /readyz, metrics of this instance, platform counts', async () => {
    await fetch(`${gateway.url}/healthz`);
    const answer = await operatorClient.get('/v1/operator/health');
    assert.equal(answer.status, 200);
    conforms('OperatorHealth', answer.body);
    const readyz = await (await fetch(`${gateway.url}/readyz`)).json();
    assert.deepEqual(answer.body.readiness, readyz);
    assert.equal(answer.body.readiness.ready, true);
    assert.ok(answer.body.instance.httpRequests >= 1, 'requests counted');
    assert.ok(answer.body.instance.uptimeSeconds >= 0);
    assert.ok(answer.body.instance.residentMemoryBytes > 1_000_000, 'resident memory of a Node process');
    assert.ok(answer.body.instance.pointsEvaluated >= 1, 'the evaluation above counted');
    assert.ok(answer.body.platform.organisations >= 1);
    assert.ok(answer.body.platform.pointsThisPeriod >= THIS_PERIOD_POINTS);
    assert.equal(answer.body.platform.periodStart, new Date(periodStart()).toISOString());
  });
});

describe('GraphQL', () => {
  const LIST = `{ operatorOrganisations { periodStart items { id plan limits { pointsPerMonth requestsPerSecond maxBatch tableBuildsPerMonth } planLimits { pointsPerMonth } override { maxBatch tableBuildsUnlimited reason setByEmail } usage { points errors recentErrors quotaFraction } } } }`;

  test('the list answers as REST does', async () => {
    // the meter writes usage every FLUSH_INTERVAL_MS: wait until the requests billed by earlier tests
    // are written (two reads a flush apart agree), or the two reads below may straddle a flush
    let settled = -1;
    for (let i = 0; i < 20; i++) {
      const points = (await operatorClient.get(`/v1/operator/organisations/${org.id}`)).body.usage.points;
      if (points === settled) break;
      settled = points;
      await new Promise((r) => setTimeout(r, FLUSH_INTERVAL_MS + 200));
    }
    const [gql, rest] = await Promise.all([operatorClient.graphql(LIST), operatorClient.get('/v1/operator/organisations')]);
    assert.equal(gql.errors, undefined, JSON.stringify(gql.errors));
    const g = gql.data.operatorOrganisations.items.find((o: any) => o.id === org.id);
    const r = rest.body.items.find((o: any) => o.id === org.id);
    assert.equal(g.plan, r.plan);
    assert.deepEqual(g.limits, r.limits);
    assert.equal(g.override.maxBatch, r.override.maxBatch);
    assert.equal(g.override.tableBuildsUnlimited, false);
    assert.equal(g.override.setByEmail, operator.email);
    assert.equal(g.usage.points, r.usage.points);
  });

  test('setOrganisationLimits, and a refusal for non-operators', async () => {
    const MUTATION = `mutation($id: ID!, $input: OrganisationLimitsInput!) { setOrganisationLimits(organisationId: $id, input: $input) { plan limits { pointsPerMonth tableBuildsPerMonth } override { pointsPerMonth tableBuildsUnlimited reason } } }`;
    const input = { plan: 'free', overrides: { pointsPerMonth: 3_000_000, tableBuildsUnlimited: true }, reason: 'Back to Free with a larger cap' };
    const denied = await ownerClient.graphql(MUTATION, { id: org.id, input });
    assert.equal(denied.errors?.[0]?.extensions?.code, 'forbidden');
    const done = await operatorClient.graphql(MUTATION, { id: org.id, input });
    assert.equal(done.errors, undefined, JSON.stringify(done.errors));
    assert.deepEqual(done.data.setOrganisationLimits, {
      plan: 'free',
      limits: { pointsPerMonth: 3_000_000, tableBuildsPerMonth: null },
      override: { pointsPerMonth: 3_000_000, tableBuildsUnlimited: true, reason: 'Back to Free with a larger cap' },
    });
    const health = await operatorClient.graphql('{ operatorHealth { ready checks { name ok } platform { organisations } } }');
    assert.equal(health.data.operatorHealth.ready, true);
    assert.deepEqual(health.data.operatorHealth.checks.map((c: any) => c.name).sort(), ['database', 'migrations']);
    const refused = await ownerClient.graphql('{ operatorHealth { ready } }');
    assert.equal(refused.errors?.[0]?.extensions?.code, 'forbidden');
  });
});
