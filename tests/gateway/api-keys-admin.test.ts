/**
 * API-key management by signed-in people, against a real gateway and database: the secret is in
 * the create (and rotate) answer only; lists never show it; rotation gives a new secret while the
 * old one works for the grace period; revocation reaches the evaluation path at once on this
 * instance and within the key cache's lifetime on another; the audit log records it all and can
 * be filtered and paged; the GraphQL account graph does the same through the same services.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { createDb } from '../../gateway/db.js';
import { CACHE_TTL_MS } from '../../gateway/keys/service.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let db: Knex;
let owner: TestUser;
let developer: TestUser;
let org: { id: string; name: string };
let ownerClient: Client;
let devClient: Client;

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
  owner = await makeUser(db, 'keyowner');
  developer = await makeUser(db, 'keydev');
  org = await makeOrganisation(db, [[owner, 'owner'], [developer, 'developer']], 'keys');
  ownerClient = new Client(gateway.url);
  devClient = new Client(gateway.url);
  assert.equal((await ownerClient.signIn(owner.email, owner.password)).status, 200);
  assert.equal((await devClient.signIn(developer.email, developer.password)).status, 200);
});
after(async () => {
  await gateway.close();
  await db.destroy();
});

const keys = `/v1/organisations/`;
const evaluateBody = { density: [1e6], temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['pressure'] };
async function evaluate(base: string, token: string): Promise<{ status: number; type?: string }> {
  const res = await fetch(`${base}/v1/eos/evaluate`, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' }, body: JSON.stringify(evaluateBody) });
  const body = (await res.json()) as { type?: string };
  return { status: res.status, ...(body.type ? { type: body.type } : {}) };
}
const secretOf = (token: string) => token.split('_')[2]!;

describe('create, list, read', () => {
  test('the secret is shown once, at creation; lists and reads never show it', async () => {
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'hydro run 42', scopes: ['eos:evaluate', 'usage:read'] });
    assert.equal(created.status, 201, JSON.stringify(created.body));
    assert.equal(created.headers.get('cache-control'), 'no-store');
    const { key, token } = created.body;
    assert.match(token, /^fwk_[a-z0-9]{8}_[A-Za-z0-9]{32}$/);
    assert.equal(key.id, token.split('_')[1]);
    assert.equal(key.prefix, `fwk_${key.id}_`);
    assert.equal(key.name, 'hydro run 42');
    assert.deepEqual(key.scopes, ['eos:evaluate', 'usage:read']);
    assert.equal(key.createdBy.id, developer.id);
    assert.equal(key.createdBy.displayName, developer.displayName);
    assert.equal(key.state, 'active');
    assert.equal(key.lastUsedAt, null);
    assert.equal(key.expiresAt, null);

    const list = await ownerClient.get(`${keys}${org.id}/keys`);
    assert.equal(list.status, 200);
    const listed = list.body.items.find((k: any) => k.id === key.id);
    assert.deepEqual(Object.keys(listed).sort(), Object.keys(key).sort());
    assert.ok(!JSON.stringify(list.body).includes(secretOf(token)), 'no secret in the list');
    assert.ok(!('token' in listed) && !('secret' in listed) && !('secretHash' in listed));
    const one = await ownerClient.get(`${keys}${org.id}/keys/${key.id}`);
    assert.ok(!JSON.stringify(one.body).includes(secretOf(token)));
    // at rest only its hash
    const row = await db('api_keys').where({ id: key.id }).first();
    assert.notEqual(row.secret_hash, secretOf(token));
    assert.equal(row.secret_hash.length, 64);

    // and it works where keys are for
    assert.equal((await evaluate(gateway.url, token)).status, 200);
  });

  test('bad requests: unknown scope, past expiry, empty name; unknown key', async () => {
    const scope = await devClient.post(`${keys}${org.id}/keys`, { name: 'x', scopes: ['eos:everything'] });
    assert.equal(scope.status, 400);
    assert.equal(scope.body.type, '/problems/invalid-request');
    assert.ok(scope.body.errors[0].field.startsWith('scopes'));
    const past = await devClient.post(`${keys}${org.id}/keys`, { name: 'x', expiresAt: '2001-01-01T00:00:00Z' });
    assert.equal(past.status, 400);
    const empty = await devClient.post(`${keys}${org.id}/keys`, { name: '  ' });
    assert.equal(empty.status, 400);
    const missing = await ownerClient.post(`${keys}${org.id}/keys/zzzzzzzz/rotate`);
    assert.equal(missing.status, 404);
    assert.equal(missing.body.type, '/problems/key-not-found');
  });

  test('an expiry in the future is kept and shown; an expired key says so', async () => {
    const at = new Date(Date.now() + 7 * 86_400_000).toISOString();
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'a week', expiresAt: at });
    assert.equal(created.status, 201);
    assert.equal(created.body.key.expiresAt, at);
    await db('api_keys').where({ id: created.body.key.id }).update({ expires_at: db.raw("now() - interval '1 second'") });
    const listed = (await devClient.get(`${keys}${org.id}/keys`)).body.items.find((k: any) => k.id === created.body.key.id);
    assert.equal(listed.state, 'expired');
    const rotate = await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`);
    assert.equal(rotate.status, 409);
    assert.equal(rotate.body.type, '/problems/key-expired');
  });
});

describe('rotate and revoke', () => {
  test('rotation: a new secret, the old one works through the grace period and not after', async () => {
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'rotate me' });
    const oldToken = created.body.token as string;
    assert.equal((await evaluate(gateway.url, oldToken)).status, 200);

    const rotated = await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`);
    assert.equal(rotated.status, 200, JSON.stringify(rotated.body));
    assert.equal(rotated.headers.get('cache-control'), 'no-store');
    const newToken = rotated.body.token as string;
    assert.notEqual(newToken, oldToken);
    assert.equal(rotated.body.key.id, created.body.key.id, 'the key keeps its id (and its usage history)');
    assert.equal(rotated.body.key.state, 'rotating');
    const graceHours = (Date.parse(rotated.body.key.previousSecretValidUntil) - Date.now()) / 3_600_000;
    assert.ok(graceHours > 23 && graceHours <= 24, `grace ${graceHours} h`);

    assert.equal((await evaluate(gateway.url, newToken)).status, 200);
    assert.equal((await evaluate(gateway.url, oldToken)).status, 200, 'old secret within the grace period');

    // the grace period is over (moved into the past in the database); a fresh instance reads it
    await db('api_keys').where({ id: created.body.key.id }).update({ previous_secret_expires_at: db.raw("now() - interval '1 second'") });
    const other = await startTestGateway();
    try {
      const old = await evaluate(other.url, oldToken);
      assert.equal(old.status, 401);
      assert.equal(old.type, '/problems/rotated-api-key');
      assert.equal((await evaluate(other.url, newToken)).status, 200);
    } finally {
      await other.close();
    }
    const listed = (await devClient.get(`${keys}${org.id}/keys`)).body.items.find((k: any) => k.id === created.body.key.id);
    assert.equal(listed.state, 'active');
    assert.equal(listed.previousSecretValidUntil, null);
  });

  test('a rotation made on another instance is honoured there at once', async () => {
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'two instances' });
    const other = await startTestGateway();
    try {
      assert.equal((await evaluate(other.url, created.body.token)).status, 200); // now cached there
      const rotated = await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`);
      assert.equal((await evaluate(other.url, rotated.body.token)).status, 200);
    } finally {
      await other.close();
    }
  });

  test('revocation: at once on this instance, within the cache lifetime on another; both secrets die', async () => {
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'revoke me' });
    const rotated = await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`);
    const other = await startTestGateway();
    try {
      assert.equal((await evaluate(other.url, rotated.body.token)).status, 200); // cached on the other instance
      const revoked = await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/revoke`);
      assert.equal(revoked.status, 200);
      assert.equal(revoked.body.state, 'revoked');
      assert.ok(revoked.body.revokedAt);
      assert.equal(revoked.body.previousSecretValidUntil, null);

      const here = await evaluate(gateway.url, rotated.body.token);
      assert.equal(here.status, 401);
      assert.equal(here.type, '/problems/revoked-api-key');
      assert.equal((await evaluate(gateway.url, created.body.token)).type, '/problems/revoked-api-key');

      // the other instance: refused once its cached entry runs out (polled, with a generous bound)
      const deadline = Date.now() + 3 * CACHE_TTL_MS;
      let status = 200;
      while (status !== 401 && Date.now() < deadline) {
        status = (await evaluate(other.url, rotated.body.token)).status;
        if (status !== 401) await new Promise((r) => setTimeout(r, 200));
      }
      assert.equal(status, 401, 'revocation reached the other instance');
    } finally {
      await other.close();
    }
    // idempotent, and a revoked key cannot be rotated
    assert.equal((await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/revoke`)).body.state, 'revoked');
    assert.equal((await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`)).body.type, '/problems/key-revoked');
  });
});

describe('audit log of keys', () => {
  test('created, rotated and revoked are recorded; filter by action and actor; paged', async () => {
    const created = await devClient.post(`${keys}${org.id}/keys`, { name: 'audited' });
    await devClient.post(`${keys}${org.id}/keys/${created.body.key.id}/rotate`);
    await ownerClient.post(`${keys}${org.id}/keys/${created.body.key.id}/revoke`);

    const log = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?action=key.*`);
    assert.equal(log.status, 200);
    const forKey = log.body.items.filter((i: any) => i.target?.id === created.body.key.id);
    assert.deepEqual(forKey.map((i: any) => i.action), ['key.revoked', 'key.rotated', 'key.created']);
    assert.equal(forKey[0].actor.id, owner.id);
    assert.equal(forKey[2].actor.id, developer.id);
    assert.equal(forKey[2].actor.displayName, developer.displayName);
    assert.ok(!JSON.stringify(log.body).includes(secretOf(created.body.token)));

    const byDev = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?actor=${developer.id}&action=key.rotated`);
    assert.ok(byDev.body.items.length >= 1);
    assert.ok(byDev.body.items.every((i: any) => i.actor.id === developer.id && i.action === 'key.rotated'));

    const future = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?from=${encodeURIComponent(new Date(Date.now() + 3_600_000).toISOString())}`);
    assert.deepEqual(future.body.items, []);

    // paging: one at a time, no repeats, newest first, and the pages add up to the whole
    const all = (await ownerClient.get(`/v1/organisations/${org.id}/audit-log?limit=200`)).body.items.map((i: any) => i.id);
    const paged: string[] = [];
    let cursor: string | null = null;
    do {
      const page: any = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?limit=2${cursor ? `&cursor=${cursor}` : ''}`);
      assert.equal(page.status, 200);
      assert.ok(page.body.items.length <= 2);
      paged.push(...page.body.items.map((i: any) => i.id));
      cursor = page.body.nextCursor;
    } while (cursor);
    assert.deepEqual(paged, all);
    assert.equal((await ownerClient.get(`/v1/organisations/${org.id}/audit-log?cursor=garbage`)).body.type, '/problems/invalid-cursor');
  });
});

describe('the GraphQL account graph (same services)', () => {
  test('me, organisations, keys; create, rotate and revoke keys; problems as extensions.code', async () => {
    const me = await devClient.graphql('{ me { id email displayName emailVerified platformRole } organisations { id name myRole plan } }');
    assert.equal(me.errors, undefined, JSON.stringify(me.errors));
    assert.equal(me.data.me.id, developer.id);
    assert.ok(me.data.organisations.some((o: any) => o.id === org.id && o.myRole === 'developer'));

    const created = await devClient.graphql(
      'mutation($org: ID!) { createApiKey(organisationId: $org, input: { name: "from graphql", scopes: [EOS_EVALUATE, JOBS_WRITE] }) { token key { id name scopes state createdBy { id } } } }',
      { org: org.id },
    );
    assert.equal(created.errors, undefined, JSON.stringify(created.errors));
    const { token, key } = created.data.createApiKey;
    assert.match(token, /^fwk_/);
    assert.deepEqual(key.scopes, ['eos:evaluate', 'jobs:write']);
    assert.equal(key.createdBy.id, developer.id);
    assert.equal((await evaluate(gateway.url, token)).status, 200);

    const listed = await ownerClient.graphql('query($id: ID!) { organisation(id: $id) { myRole permissions members { user { id } role } keys { id name state } auditLog(filter: { action: "key.created" }, first: 5) { items { action actor { id } details } nextCursor } } }', { id: org.id });
    assert.equal(listed.errors, undefined, JSON.stringify(listed.errors));
    const o = listed.data.organisation;
    assert.equal(o.myRole, 'owner');
    assert.ok(o.permissions.includes('organisation.delete'));
    assert.ok(o.keys.some((k: any) => k.id === key.id && k.state === 'active'));
    assert.ok(!JSON.stringify(listed.data).includes(secretOf(token)));
    assert.ok(o.auditLog.items.some((i: any) => JSON.parse(i.details).name === 'from graphql'));
    // REST and GraphQL agree on the keys
    const rest = (await ownerClient.get(`${keys}${org.id}/keys`)).body.items.map((k: any) => k.id);
    assert.deepEqual(o.keys.map((k: any) => k.id), rest);

    const rotated = await devClient.graphql('mutation($org: ID!, $key: ID!) { rotateApiKey(organisationId: $org, keyId: $key) { token key { state previousSecretValidUntil } } }', { org: org.id, key: key.id });
    assert.equal(rotated.data.rotateApiKey.key.state, 'rotating');
    const revoked = await devClient.graphql('mutation($org: ID!, $key: ID!) { revokeApiKey(organisationId: $org, keyId: $key) { state } }', { org: org.id, key: key.id });
    assert.equal(revoked.data.revokeApiKey.state, 'revoked');

    // the developer may not delete the organisation: a problem in extensions
    const denied = await devClient.graphql('mutation($id: ID!) { deleteOrganisation(id: $id) }', { id: org.id });
    assert.equal(denied.errors?.[0]?.extensions?.code, 'forbidden');
    assert.equal(denied.errors?.[0]?.extensions?.status, 403);
    // without a session
    const anonymous = await new Client(gateway.url).graphql('{ me { id } }');
    assert.equal(anonymous.errors?.[0]?.extensions?.code, 'session-required');
  });
});
