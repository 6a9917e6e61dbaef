/**
 * Regressions of what the route fuzzer (fuzz-routes.ts) found, each replayed as the exact kind of
 * request that once answered 5xx or not as problem+json, against a real gateway.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { createDb } from '../../gateway/db.js';
import type { RunningGateway } from '../../gateway/server.js';
import { KeyService } from '../../gateway/keys/service.js';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { expectProblem } from '../support/api.js';
import { Client, makeUser, tag } from '../support/accounts.js';

let gateway: RunningGateway;
let db: Knex;
let keys: KeyService;
let token: string;

before(async () => {
  gateway = await startTestGateway({ JOBS_IN_PROCESS_WORKER: 'false' });
  db = createDb(testDatabaseUrl(), 2);
  keys = new KeyService(db);
  const user = await makeUser(db, 'regress');
  const [org] = await db('organisations').insert({ name: `Regress ${tag()}`, slug: `regress-${tag()}` }).returning('id');
  await db('memberships').insert({ user_id: user.id, organisation_id: org.id, role: 'owner' });
  token = (await keys.create({ organisationId: org.id, name: 'regress', scopes: ['jobs:write', 'eos:evaluate'], createdBy: user.id, expiresAt: null })).token;
});
after(async () => {
  await keys.close();
  await gateway.close();
  await db.destroy();
});

const jobs = (body: string | FormData, contentType?: string) =>
  fetch(`${gateway.url}/v1/jobs`, { method: 'POST', headers: { authorization: `Bearer ${token}`, ...(contentType ? { 'content-type': contentType } : {}) }, body });

test('finding 1: a multipart part whose name holds a NUL (busboy "Malformed part header") is a 400 problem, not a 500', async () => {
  const form = new FormData();
  form.append('file', new Blob(['density,temperature\n1e6,1e7\n'], { type: 'text/csv' }), 'states.csv');
  form.append('\u0000', 'x');
  await expectProblem(await jobs(form), 400, 'invalid-request');
});

test('finding 1: multipart without a boundary, and a body cut off mid-part, are 400 problems', async () => {
  await expectProblem(await jobs('--x\r\n', 'multipart/form-data'), 400, 'invalid-request');
  await expectProblem(await jobs('--zzz\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\n\r\ndensity', 'multipart/form-data; boundary=zzz'), 400, 'invalid-request');
});

test('finding 2: a file with the HDF5 signature and garbage after it is a 422 invalid-upload, not a 500', async () => {
  const form = new FormData();
  form.append('file', new Blob([Buffer.concat([Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(600, 7)])], { type: 'application/x-hdf5' }), 'states.h5');
  const problem = await expectProblem(await jobs(form), 422, 'invalid-upload');
  assert.match(problem['detail'], /not readable as HDF5/);
});

test('finding 3: a key id holding a NUL (%00) is a 404 key-not-found, not a 500 from PostgreSQL', async () => {
  const owner = await makeUser(db, 'keyid');
  const [org] = await db('organisations').insert({ name: `Key id ${tag()}`, slug: `keyid-${tag()}` }).returning('id');
  await db('memberships').insert({ user_id: owner.id, organisation_id: org.id, role: 'owner' });
  const c = new Client(gateway.url);
  assert.equal((await c.signIn(owner.email, owner.password)).status, 200);
  for (const [method, suffix] of [['GET', ''], ['POST', '/rotate'], ['POST', '/revoke']] as const) {
    const answer = await c.call(method, `/v1/organisations/${org.id}/keys/%00${suffix}`, method === 'POST' ? {} : undefined);
    assert.equal(answer.status, 404, `${method} ${suffix}: ${JSON.stringify(answer.body)}`);
    assert.match(answer.headers.get('content-type') ?? '', /problem\+json/);
  }
  const gql = await c.graphql('mutation($o: ID!, $k: ID!) { revokeApiKey(organisationId: $o, keyId: $k) { id } }', { o: org.id, k: '\u0000' });
  assert.equal(gql.errors?.[0]?.extensions?.code, 'key-not-found', JSON.stringify(gql));
});

test('finding 4: a GraphQL subscription (the schema has none) is a BAD_REQUEST error, not "internal"', async () => {
  const res = await fetch(`${gateway.url}/graphql`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ query: 'subscription { x }' }) });
  const body = (await res.json()) as { errors?: Array<{ message: string; extensions?: { code?: string } }> };
  assert.equal(body.errors?.[0]?.extensions?.code, 'BAD_REQUEST', JSON.stringify(body));
  assert.match(body.errors![0]!.message, /subscription/i);
});

test('finding 5: organisations created at once under names with the same slug all succeed, each with its own slug', async () => {
  const owner = await makeUser(db, 'slugrace');
  const c = new Client(gateway.url);
  assert.equal((await c.signIn(owner.email, owner.password)).status, 200);
  const name = `Race group ${tag()}`;
  // "X", "\"X\"" and "x!" all slug to "x": the warm-up of the fuzz sent two of them at once and got a 500
  const answers = await Promise.all([name, `"${name}"`, `${name}!`, name.toUpperCase(), name, `"${name}"`].map((n) => c.post('/v1/organisations', { name: n })));
  assert.deepEqual(answers.map((a) => a.status), [201, 201, 201, 201, 201, 201], JSON.stringify(answers.map((a) => a.body)));
  const slugs = answers.map((a) => a.body.slug as string);
  assert.equal(new Set(slugs).size, slugs.length);
  assert.ok(slugs.every((s) => s.startsWith(name.toLowerCase().replace(/[^a-z0-9]+/g, '-').slice(0, 33))), slugs.join(' '));
});

test('review: 200 aliased evaluations in one GraphQL request are a 400 query-too-complex, none evaluated', async () => {
  const query = `query($input: EvaluateInput!) { ${Array.from({ length: 200 }, (_, i) => `e${i}: evaluate(input: $input) { status }`).join(' ')} }`;
  const input = { density: [1e6], temperature: [1e7], composition: { abar: 12, zbar: 6 }, fields: ['pressure'] };
  const res = await fetch(`${gateway.url}/graphql`, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' }, body: JSON.stringify({ query, variables: { input } }) });
  const body = (await res.json()) as { data?: unknown; errors?: Array<{ message: string; extensions?: { code?: string } }> };
  assert.equal(res.status, 400);
  assert.equal(body.data, undefined);
  assert.equal(body.errors?.[0]?.extensions?.code, 'query-too-complex', JSON.stringify(body));
});
