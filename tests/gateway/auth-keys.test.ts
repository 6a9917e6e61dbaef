/**
 * API keys on the EOS endpoints: missing, malformed, unknown, wrong-secret, revoked and expired
 * keys → 401 problems; a key without the eos:evaluate scope → 403; the same for the binary form
 * and GraphQL; requests refused after authentication are recorded in usage as errors.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures } from '../support/fixtures.js';
import { expectProblem, graphql, postJson } from '../support/api.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let fx: Fixtures;

before(async () => {
  gateway = await startTestGateway();
  fx = new Fixtures();
});
after(async () => {
  await gateway.close();
  await fx.close();
});

const body = { density: 1e6, temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure'] };
const call = (authorization: string | undefined, path = '/v1/eos/evaluate') =>
  fetch(`${gateway.url}${path}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...(authorization ? { authorization } : {}) },
    body: JSON.stringify(body),
  });

describe('401 for every way a key can be wrong', () => {
  test('no Authorization header', async () => {
    for (const path of ['/v1/eos/evaluate', '/v1/eos/invert', '/v1/eos/regime']) {
      const problem = await expectProblem(await call(undefined, path), 401, 'missing-api-key');
      assert.match(problem.detail, /Bearer fwk_/);
    }
  });

  test('malformed tokens', async () => {
    for (const authorization of ['Bearer', 'Bearer nonsense', 'Basic dXNlcjpwYXNz', 'Bearer fwk_short_secret', 'Bearer fwk_ABCDEFGH_0123456789abcdef0123456789abcdef', 'fwk_abcdefgh_0123456789abcdef0123456789abcdef']) {
      await expectProblem(await call(authorization), 401, 'invalid-api-key');
    }
  });

  test('an unknown id, or the right id with the wrong secret', async () => {
    await expectProblem(await call('Bearer fwk_zzzzzzzz_0123456789abcdef0123456789abcdef'), 401, 'invalid-api-key');
    const key = await fx.keyOnPlan('free');
    const wrong = key.token.slice(0, -1) + (key.token.endsWith('a') ? 'b' : 'a');
    const problem = await expectProblem(await call(`Bearer ${wrong}`), 401, 'invalid-api-key');
    assert.doesNotMatch(JSON.stringify(problem), new RegExp(key.token.split('_')[2]!), 'the secret never appears in an answer');
    assert.equal((await call(`Bearer ${key.token}`)).status, 200);
  });

  test('a revoked key', async () => {
    const org = await fx.organisation('free');
    const key = await fx.key(org);
    await fx.keys.revoke(key.id);
    const problem = await expectProblem(await call(`Bearer ${key.token}`), 401, 'revoked-api-key');
    assert.match(problem.detail, new RegExp(key.id));
  });

  test('an expired key; one expiring later works', async () => {
    const org = await fx.organisation('free');
    const expired = await fx.key(org, { expiresAt: new Date(Date.now() - 60_000) });
    const problem = await expectProblem(await call(`Bearer ${expired.token}`), 401, 'expired-api-key');
    assert.match(problem.detail, /expired at/);
    const later = await fx.key(org, { expiresAt: new Date(Date.now() + 3_600_000) });
    assert.equal((await call(`Bearer ${later.token}`)).status, 200);
  });

  test('the binary form authenticates the same way', async () => {
    const res = await fetch(`${gateway.url}/v1/eos/evaluate?inputs=density,temperature&mixture=he4`, {
      method: 'POST',
      headers: { 'content-type': 'application/octet-stream' },
      body: new Uint8Array(16),
    });
    await expectProblem(res, 401, 'missing-api-key');
  });

  test('a body is not read before the key is known (no 4xx about the body for anonymous calls)', async () => {
    const res = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{ not json' });
    await expectProblem(res, 401, 'missing-api-key');
  });
});

describe('403 without the eos:evaluate scope', () => {
  test('REST and GraphQL', async () => {
    const key = await fx.keyOnPlan('free', ['usage:read', 'jobs:write']);
    const problem = await expectProblem(await call(`Bearer ${key.token}`), 403, 'insufficient-scope');
    assert.equal(problem.requiredScope, 'eos:evaluate');
    const gql = await graphql(gateway.url, key.token, 'query { evaluate(input: { density: 1e6, temperature: 1e8, composition: { abar: 12, zbar: 6 } }) { status } }');
    assert.equal(gql.body.errors?.[0]?.extensions?.['code'], 'insufficient-scope');
  });

  test('refused requests of a known key are recorded as errors, never as points', async () => {
    const key = await fx.keyOnPlan('free', ['usage:read']);
    await call(`Bearer ${key.token}`);
    const good = await fx.keyOnPlan('free');
    await postJson(`${gateway.url}/v1/eos/evaluate`, good.token, { ...body, density: 'x' });
    await postJson(`${gateway.url}/v1/eos/evaluate`, good.token, body);
    await gateway.close();
    gateway = await startTestGateway();
    const refused = await fx.usage(key.org.id);
    assert.deepEqual(refused.get('/v1/eos/evaluate'), { requests: 1, points: 0, errors: 1 });
    const mixed = await fx.usage(good.org.id);
    assert.deepEqual(mixed.get('/v1/eos/evaluate'), { requests: 2, points: 1, errors: 1 });
  });
});
