/**
 * Saved mixtures (/v1/mixtures, GraphQL) against a real gateway and database: Abar, Zbar, Ye from
 * the nuclides (checked against hand computation from the definitions Ye = Σ Z X / A,
 * Abar = 1 / Σ X / A, Zbar = Abar·Ye), validation, who may read and change, API-key reads, use in
 * evaluations (JSON, binary, GraphQL) equal to the same nuclides sent inline, and the
 * Idempotency-Key header on creating POSTs.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { expectProblem, graphql, postJson } from '../support/api.js';
import { Client, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let fx: Fixtures;
let owner: TestUser, maintainer: TestUser, developer: TestUser, viewer: TestUser, outsider: TestUser;
let org: { id: string; name: string };
let otherOrg: { id: string; name: string };
let key: TestKey;
let otherKey: TestKey;
const clients: Record<string, Client> = {};

// H1 0.7 + He4 0.3 by mass, by hand: Ye = 0.7·1/1 + 0.3·2/4 = 0.85; Σ X/A = 0.7 + 0.075 = 0.775,
// Abar = 1/0.775 = 1.2903225806451613; Zbar = Abar·Ye = 1.0967741935483871.
const ENVELOPE = {
  name: 'Envelope X=0.7',
  description: 'hydrogen-rich',
  nuclides: [
    { nuclide: 'H1', a: 1, z: 1, massFraction: 0.7 },
    { a: 4, z: 2, massFraction: 0.3 },
  ],
};

before(async () => {
  gateway = await startTestGateway({ EOS_POOL_MIN_THREADS: '1', EOS_POOL_MAX_THREADS: '1' });
  fx = new Fixtures();
  [owner, maintainer, developer, viewer, outsider] = await Promise.all(['mixowner', 'mixmaint', 'mixdev', 'mixview', 'mixout'].map((l) => makeUser(fx.db, l)));
  org = await makeOrganisation(fx.db, [[owner, 'owner'], [maintainer, 'maintainer'], [developer, 'developer'], [viewer, 'viewer']], 'mixtures');
  otherOrg = await makeOrganisation(fx.db, [[outsider, 'owner']], 'mixtures-other');
  await fx.db('organisations').whereIn('id', [org.id, otherOrg.id]).update({ plan_id: 'group' });
  key = await fx.key({ id: org.id, slug: '', plan: 'group', ownerId: owner.id }, { scopes: ['eos:evaluate'] });
  otherKey = await fx.key({ id: otherOrg.id, slug: '', plan: 'group', ownerId: outsider.id }, { scopes: ['eos:evaluate'] });
  for (const [name, user, orgId] of [['owner', owner, org.id], ['maintainer', maintainer, org.id], ['developer', developer, org.id], ['viewer', viewer, org.id], ['outsider', outsider, otherOrg.id]] as const) {
    const client = new Client(gateway.url);
    assert.equal((await client.signIn(user.email, user.password)).status, 200);
    client.organisationId = orgId;
    clients[name] = client;
  }
});
after(async () => {
  await gateway.close();
  await fx.close();
});

let saved: any;

describe('saving and reading', () => {
  test('a maintainer saves a mixture; Abar, Zbar, Ye match the hand computation; the label is filled in', async () => {
    const answer = await clients['maintainer']!.post('/v1/mixtures', ENVELOPE);
    assert.equal(answer.status, 201, JSON.stringify(answer.body));
    saved = answer.body;
    assert.equal(answer.headers.get('location'), `/v1/mixtures/${saved.id}`);
    assert.equal(saved.builtin, false);
    assert.ok(Math.abs(saved.ye - 0.85) < 1e-15);
    assert.ok(Math.abs(saved.abar - 1.2903225806451613) < 1e-14);
    assert.ok(Math.abs(saved.zbar - 1.0967741935483871) < 1e-14);
    assert.deepEqual(saved.nuclides.map((n: any) => n.nuclide), ['H1', 'He4']);
    const audit = await fx.db('audit_log').where({ organisation_id: org.id, action: 'mixture.created' });
    assert.equal(audit.length, 1);
  });

  test('every member lists built-in mixtures first, then saved ones; outsiders get 404', async () => {
    for (const who of ['owner', 'maintainer', 'developer', 'viewer']) {
      const answer = await clients[who]!.get('/v1/mixtures');
      assert.equal(answer.status, 200, who);
      const ids = answer.body.items.map((m: any) => m.id);
      assert.deepEqual(ids.slice(0, 5), ['c12-o16', 'he4', 'o16-ne20-mg24', 'fe56', 'h1-he4']);
      assert.ok(ids.includes(saved.id));
    }
    const outsiderView = await clients['outsider']!.get(`/v1/mixtures?organisationId=${org.id}`, { headers: { 'fermiwell-organisation': org.id } });
    await expectProblem(outsiderView, 404, 'organisation-not-found');
    const otherList = await clients['outsider']!.get('/v1/mixtures');
    assert.ok(!otherList.body.items.some((m: any) => m.id === saved.id), "another organisation's list never shows it");
  });

  test('the built-in C/O mixture: Ye = 0.5, Abar = 1/(0.5/12 + 0.5/16) = 13.714285714285714 (by hand)', async () => {
    const answer = await clients['viewer']!.get('/v1/mixtures/c12-o16');
    assert.equal(answer.status, 200);
    assert.equal(answer.body.builtin, true);
    assert.ok(Math.abs(answer.body.abar - 13.714285714285714) < 1e-13);
    assert.ok(Math.abs(answer.body.ye - 0.5) < 1e-15);
  });

  test('developers and viewers may not change mixtures (role matrix: mixtures.manage)', async () => {
    for (const who of ['developer', 'viewer']) {
      await expectProblem(await clients[who]!.post('/v1/mixtures', { ...ENVELOPE, name: `by ${who}` }), 403, 'forbidden');
      await expectProblem(await clients[who]!.call('PUT', `/v1/mixtures/${saved.id}`, ENVELOPE), 403, 'forbidden');
      await expectProblem(await clients[who]!.delete(`/v1/mixtures/${saved.id}`), 403, 'forbidden');
    }
  });

  test('an API key reads its own organisation\'s mixtures; naming another organisation is 404', async () => {
    const own = await fetch(`${gateway.url}/v1/mixtures/${saved.id}`, { headers: { authorization: `Bearer ${key.token}` } });
    assert.equal(own.status, 200);
    assert.equal(((await own.json()) as any).name, ENVELOPE.name);
    const foreign = await fetch(`${gateway.url}/v1/mixtures/${saved.id}`, { headers: { authorization: `Bearer ${otherKey.token}` } });
    await expectProblem(foreign, 404, 'mixture-not-found');
    const namedOther = await fetch(`${gateway.url}/v1/mixtures?organisationId=${org.id}`, { headers: { authorization: `Bearer ${otherKey.token}` } });
    await expectProblem(namedOther, 404, 'organisation-not-found');
  });
});

describe('validation', () => {
  test('fractions that do not sum to 1 are refused with the sum; normalize rescales them', async () => {
    const bad = await clients['owner']!.post('/v1/mixtures', { name: 'Off by a bit', nuclides: [{ a: 12, z: 6, massFraction: 0.5 }, { a: 16, z: 8, massFraction: 0.4 }] });
    const problem = await expectProblem(bad, 400, 'invalid-request');
    assert.ok(Math.abs(problem['massFractionSum'] - 0.9) < 1e-12);
    const fixed = await clients['owner']!.post('/v1/mixtures', { name: 'Rescaled', normalize: true, nuclides: [{ a: 12, z: 6, massFraction: 0.5 }, { a: 16, z: 8, massFraction: 0.4 }] });
    assert.equal(fixed.status, 201);
    assert.ok(Math.abs(fixed.body.nuclides[0].massFraction - 5 / 9) < 1e-15);
  });

  test('Z above A, A below 1, an empty list, unknown fields and a built-in name are refused, naming the field', async () => {
    const cases: Array<[unknown, string]> = [
      [{ name: 'Z>A', nuclides: [{ a: 4, z: 5, massFraction: 1 }] }, 'nuclides.0.z'],
      [{ name: 'A<1', nuclides: [{ a: 0.5, z: 0, massFraction: 1 }] }, 'nuclides.0.a'],
      [{ name: 'empty', nuclides: [] }, 'nuclides'],
      [{ name: 'extra', nuclides: [{ a: 4, z: 2, massFraction: 1 }], colour: 'red' }, '(body)'],
      [{ name: 'he4', nuclides: [{ a: 4, z: 2, massFraction: 1 }] }, 'name'],
    ];
    for (const [body, field] of cases) {
      const problem = await expectProblem(await clients['owner']!.post('/v1/mixtures', body), 400, 'invalid-request');
      assert.ok(problem['errors'].some((e: any) => e.field === field), `${JSON.stringify(body)} → ${JSON.stringify(problem['errors'])}`);
    }
  });

  test('a name used twice in one organisation is 409; built-in mixtures cannot be changed', async () => {
    await expectProblem(await clients['owner']!.post('/v1/mixtures', ENVELOPE), 409, 'mixture-name-taken');
    await expectProblem(await clients['owner']!.call('PUT', '/v1/mixtures/he4', ENVELOPE), 409, 'mixture-read-only');
    await expectProblem(await clients['owner']!.delete('/v1/mixtures/fe56'), 409, 'mixture-read-only');
  });
});

describe('in evaluations', () => {
  const point = { density: [1e5, 3e7], temperature: [1e7, 2e9], fields: ['pressure', 'specificEnergy', 'specificEntropy', 'ye'] };

  test('{ mixture: <saved id> } gives exactly the numbers of the same nuclides sent inline (JSON and GraphQL)', async () => {
    const inline = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...point, composition: { nuclides: ENVELOPE.nuclides.map(({ a, z, massFraction }) => ({ a, z, massFraction })) } });
    const byId = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...point, composition: { mixture: saved.id } });
    assert.equal(inline.status, 200, JSON.stringify(inline.body));
    assert.equal(byId.status, 200, JSON.stringify(byId.body));
    for (const f of point.fields) assert.deepEqual(byId.body.values[f], inline.body.values[f], f);
    assert.ok(Math.abs(byId.body.values.ye[0] - 0.85) < 1e-15);
    const gql = await graphql(gateway.url, key.token, 'query($in: EvaluateInput!) { evaluate(input: $in) { values { pressure } } }', { in: { density: point.density, temperature: point.temperature, composition: { mixture: saved.id }, fields: ['pressure'] } });
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    assert.deepEqual(gql.body.data.evaluate.values.pressure, inline.body.values.pressure);
  });

  test('the binary form takes ?mixture=<saved id>', async () => {
    const body = Buffer.from(new Float64Array([1e5, 3e7, 1e7, 2e9]).buffer);
    const res = await fetch(`${gateway.url}/v1/eos/evaluate?inputs=density,temperature&fields=pressure&mixture=${saved.id}`, {
      method: 'POST',
      headers: { authorization: `Bearer ${key.token}`, 'content-type': 'application/octet-stream' },
      body,
    });
    assert.equal(res.status, 200);
    const p = new Float64Array((await res.arrayBuffer()).slice(0, 16));
    const inline = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...point, composition: { mixture: saved.id }, fields: ['pressure'] });
    assert.deepEqual(Array.from(p), inline.body.values.pressure);
  });

  test("an unknown id, or another organisation's mixture, is a 422 naming the built-in ones", async () => {
    const foreign = await postJson(`${gateway.url}/v1/eos/evaluate`, otherKey.token, { ...point, composition: { mixture: saved.id } });
    const problem = await expectProblem(foreign, 422, 'invalid-composition');
    assert.ok(problem['mixtures'].includes('c12-o16'));
    await expectProblem(await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...point, composition: { mixture: 'no-such-thing' } }), 422, 'invalid-composition');
  });
});

describe('GraphQL', () => {
  test('createMixture, mixtures and deleteMixture answer with the REST field names and numbers', async () => {
    const created = await clients['owner']!.graphql(
      'mutation($org: ID!, $in: MixtureInput!) { createMixture(organisationId: $org, input: $in) { id name abar zbar ye builtin nuclides { nuclide a z massFraction } } }',
      { org: org.id, in: { ...ENVELOPE, name: 'Envelope via GraphQL' } },
    );
    assert.equal(created.errors, undefined, JSON.stringify(created.errors));
    const viaRest = await clients['owner']!.get(`/v1/mixtures/${created.data.createMixture.id}`);
    for (const f of ['name', 'abar', 'zbar', 'ye', 'builtin', 'nuclides']) assert.deepEqual(created.data.createMixture[f], viaRest.body[f], f);
    const listed = await clients['viewer']!.graphql('query($org: ID!) { mixtures(organisationId: $org) { id } }', { org: org.id });
    assert.ok(listed.data.mixtures.some((m: any) => m.id === created.data.createMixture.id));
    const refused = await clients['viewer']!.graphql('mutation($org: ID!, $id: ID!) { deleteMixture(organisationId: $org, id: $id) }', { org: org.id, id: created.data.createMixture.id });
    assert.ok(refused.errors?.length);
    const deleted = await clients['owner']!.graphql('mutation($org: ID!, $id: ID!) { deleteMixture(organisationId: $org, id: $id) }', { org: org.id, id: created.data.createMixture.id });
    assert.equal(deleted.data.deleteMixture, true);
    await expectProblem(await clients['owner']!.get(`/v1/mixtures/${created.data.createMixture.id}`), 404, 'mixture-not-found');
  });
});

describe('changing', () => {
  test('PUT replaces the nuclides and the numbers follow; DELETE removes it', async () => {
    const changed = await clients['maintainer']!.call('PUT', `/v1/mixtures/${saved.id}`, { name: 'Envelope X=0.75', nuclides: [{ a: 1, z: 1, massFraction: 0.75 }, { a: 4, z: 2, massFraction: 0.25 }] });
    assert.equal(changed.status, 200, JSON.stringify(changed.body));
    assert.ok(Math.abs(changed.body.ye - 0.875) < 1e-15); // 0.75 + 0.25·2/4, by hand
    assert.equal((await clients['maintainer']!.delete(`/v1/mixtures/${saved.id}`)).status, 204);
    await expectProblem(await clients['maintainer']!.delete(`/v1/mixtures/${saved.id}`), 404, 'mixture-not-found');
  });
});

describe('Idempotency-Key (IETF draft-ietf-httpapi-idempotency-key-header)', () => {
  test('a retried create answers the first result again and saves once; another body with the key is 422', async () => {
    const headers = { 'idempotency-key': `mix-${Fixtures.tag()}` };
    const body = { ...ENVELOPE, name: `Retried ${Fixtures.tag()}` };
    const first = await clients['owner']!.post('/v1/mixtures', body, { headers });
    const second = await clients['owner']!.post('/v1/mixtures', body, { headers });
    assert.equal(first.status, 201);
    assert.equal(second.status, 201);
    assert.equal(second.body.id, first.body.id);
    assert.equal(second.headers.get('fermiwell-replayed'), 'true');
    assert.equal(second.headers.get('location'), first.headers.get('location'));
    assert.equal((await fx.db('mixtures').where({ organisation_id: org.id, name: body.name })).length, 1);
    await expectProblem(await clients['owner']!.post('/v1/mixtures', { ...body, description: 'changed' }, { headers }), 422, 'idempotency-key-reused');
    // the same key from another person is theirs alone
    const byMaintainer = await clients['maintainer']!.post('/v1/mixtures', { ...body, name: `${body.name} too` }, { headers });
    assert.equal(byMaintainer.status, 201);
  });

  test('a refused first attempt keeps nothing: the corrected retry with the same key runs', async () => {
    const headers = { 'idempotency-key': `mix-${Fixtures.tag()}` };
    const name = `Corrected ${Fixtures.tag()}`;
    await expectProblem(await clients['owner']!.post('/v1/mixtures', { name, nuclides: [{ a: 4, z: 2, massFraction: 0.9 }] }, { headers }), 400, 'invalid-request');
    const retry = await clients['owner']!.post('/v1/mixtures', { name, nuclides: [{ a: 4, z: 2, massFraction: 1 }] }, { headers });
    assert.equal(retry.status, 201, JSON.stringify(retry.body));
  });

  test('a retried key creation makes one key and never shows the secret again', async () => {
    const headers = { 'idempotency-key': `key-${Fixtures.tag()}` };
    const name = `idem ${Fixtures.tag()}`;
    const first = await clients['owner']!.post(`/v1/organisations/${org.id}/keys`, { name }, { headers });
    assert.equal(first.status, 201, JSON.stringify(first.body));
    const second = await clients['owner']!.post(`/v1/organisations/${org.id}/keys`, { name }, { headers });
    const problem = await expectProblem(second, 409, 'already-created');
    assert.equal(problem['location'], first.headers.get('location'));
    assert.ok(!JSON.stringify(problem).includes('fwk_'), 'no secret in the replay');
    assert.equal((await fx.db('api_keys').where({ organisation_id: org.id, name })).length, 1);
    const stored = await fx.db('idempotency_keys').where({ key: headers['idempotency-key'] }).first();
    assert.equal(stored.body, null, 'the answer holding the secret is not stored');
  });

  test('a malformed key is a 400', async () => {
    await expectProblem(await clients['owner']!.post('/v1/mixtures', ENVELOPE, { headers: { 'idempotency-key': 'has space' } }), 400, 'invalid-idempotency-key');
  });
});
