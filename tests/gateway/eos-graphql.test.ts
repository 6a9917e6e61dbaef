/**
 * GraphQL at /graphql: evaluate, invert and regime with the REST field names, identical numbers
 * to REST for the same request, errors with the REST problem kinds in extensions.code, CSRF
 * prevention, no landing page, and the SDL loaded from every file of schema/graphql.
 */
import { describe, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'graphql';
import { useGatewayWithKey } from '../support/gateway-with-key.js';
import { graphql, postJson } from '../support/api.js';
import { loadTypeDefs, SDL_DIR } from '../../gateway/graphql/server.js';

// no free-energy table configured: method "table" is method-not-available here (tests/gateway/eos-table.test.ts has the table)
const setup = useGatewayWithKey({ EOS_TABLE_PATH: '' }, 'group');

const META = 'meta { operation modelVersion constantsSet method inverseProblem points components tableAccuracy { maxRelativeError } statusMessageCount warningCount detailsTruncated }';
const DETAILS = 'status warningFlags statusMessages { point status code message } warnings { point code message }';

const EVALUATE = `query Evaluate($input: EvaluateInput!) {
  evaluate(input: $input) {
    ${META}
    values { pressure specificEnergy specificEntropy gamma1 soundSpeed cp eta }
    components { electrons { pressure } ions { pressure } photons { pressure } }
    ${DETAILS}
  }
}`;

describe('REST and GraphQL give identical answers', () => {
  test('evaluate', async () => {
    const input = {
      density: [1e-2, 1e4, 1e8, 1e16],
      temperature: [1e5, 1e7, 1e9, 1e8],
      composition: { mixture: 'h1-he4' },
      fields: ['pressure', 'specificEnergy', 'specificEntropy', 'gamma1', 'soundSpeed', 'eta', 'cp'],
      components: ['electrons', 'positrons', 'ions', 'photons'],
      breakdown: true,
    };
    const rest = await postJson(`${setup.gateway.url}/v1/eos/evaluate`, setup.key.token, input);
    assert.equal(rest.status, 200);
    const gql = await graphql(setup.gateway.url, setup.key.token, EVALUATE, { input });
    assert.equal(gql.status, 200);
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    const g = gql.body.data.evaluate;
    // GraphQL returns what was selected; compare the selected parts with REST
    for (const f of Object.keys(g.values)) assert.deepEqual(g.values[f], rest.body.values[f], f);
    assert.deepEqual(g.components.electrons.pressure, rest.body.components.electrons.pressure);
    assert.deepEqual(g.components.ions.pressure, rest.body.components.ions.pressure);
    for (const k of ['status', 'warningFlags', 'statusMessages', 'warnings']) assert.deepEqual(g[k], rest.body[k], k);
    const { computeMs: _a, ...restMeta } = rest.body.meta;
    assert.deepEqual({ ...g.meta, tableAccuracy: g.meta.tableAccuracy }, { ...restMeta });
    assert.equal(rest.body.status[3], 3, 'the point outside the domain has its status in both');
    assert.equal(g.values.pressure[3], null);
  });

  test('invert', async () => {
    const input = { density: [1e3, 1e7], specificEnergy: [1e16, 3e17], composition: { abar: 12, zbar: 6 }, fields: ['temperature', 'pressure', 'iterations', 'converged'] };
    const rest = await postJson(`${setup.gateway.url}/v1/eos/invert`, setup.key.token, input);
    const gql = await graphql(
      setup.gateway.url,
      setup.key.token,
      `query($input: InvertInput!) { invert(input: $input) { ${META} values { temperature pressure iterations converged density } ${DETAILS} } }`,
      { input },
    );
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    const g = gql.body.data.invert;
    assert.equal(g.meta.inverseProblem, 'density-energy');
    assert.equal(g.values.density, null, 'not requested: null');
    const { density: _d, ...values } = g.values;
    assert.deepEqual(values, rest.body.values);
    assert.deepEqual(g.status, rest.body.status);
  });

  test('regime', async () => {
    const input = { density: [1e9, 1e-6], temperature: [1e7, 1e10], composition: { mixture: 'c12-o16' }, fields: ['degeneracy', 'relativity', 'pairs', 'radiation', 'coulomb', 'summary'] };
    const rest = await postJson(`${setup.gateway.url}/v1/eos/regime`, setup.key.token, input);
    const gql = await graphql(
      setup.gateway.url,
      setup.key.token,
      `query($input: RegimeInput!) { regime(input: $input) { values {
        degeneracy { class eta } relativity { class beta fermiMomentum x } pairs { ratio } radiation { pressureFraction } coulomb { class gamma } summary
      } ${DETAILS} } }`,
      { input },
    );
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    assert.deepEqual(gql.body.data.regime.values, rest.body.values);
    assert.deepEqual(gql.body.data.regime.warnings, rest.body.warnings);
  });

  test('a single value stands for every point, as in REST', async () => {
    const gql = await graphql(setup.gateway.url, setup.key.token, 'query { evaluate(input: { density: 1e6, temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: [pressure] }) { values { pressure } meta { points } } }');
    const rest = await postJson(`${setup.gateway.url}/v1/eos/evaluate`, setup.key.token, { density: 1e6, temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure'] });
    assert.deepEqual(gql.body.data.evaluate.values.pressure, rest.body.values.pressure);
    assert.equal(gql.body.data.evaluate.meta.points, 1);
  });
});

describe('GraphQL errors carry the REST problem kinds', () => {
  const query = 'query($input: EvaluateInput!) { evaluate(input: $input) { values { pressure } } }';
  const good = { density: [1e6], temperature: [1e8], composition: { abar: 12, zbar: 6 } };

  test('authentication and scope', async () => {
    const none = await graphql(setup.gateway.url, undefined, query, { input: good });
    assert.equal(none.body.errors?.[0]?.extensions?.['code'], 'missing-api-key');
    assert.equal(none.body.errors?.[0]?.extensions?.['problem']?.status, 401);
    const bad = await graphql(setup.gateway.url, 'fwk_aaaaaaaa_bbbbbbbbbbbbbbbbbbbbbbbbbbbbbbbb', query, { input: good });
    assert.equal(bad.body.errors?.[0]?.extensions?.['code'], 'invalid-api-key');
    const usage = await setup.fx.keyOnPlan('free', ['usage:read']);
    const scope = await graphql(setup.gateway.url, usage.token, query, { input: good });
    assert.equal(scope.body.errors?.[0]?.extensions?.['code'], 'insufficient-scope');
  });

  test('composition, batch size, lengths, method', async () => {
    const cases: Array<[Record<string, unknown>, string]> = [
      [{ ...good, composition: { mixture: 'vibranium' } }, 'invalid-composition'],
      [{ ...good, composition: { abar: [12], zbar: [6], mixture: 'he4' } }, 'invalid-composition'],
      [{ ...good, composition: { nuclides: [{ a: 4, z: 2, massFraction: [0.3] }] } }, 'invalid-composition'],
      [{ ...good, temperature: [1e8, 1e8, 1e8], density: [1, 2] }, 'invalid-request'],
      [{ ...good, method: 'table' }, 'method-not-available'],
    ];
    for (const [input, code] of cases) {
      const res = await graphql(setup.gateway.url, setup.key.token, query, { input });
      assert.equal(res.body.errors?.[0]?.extensions?.['code'], code, JSON.stringify(res.body));
      assert.ok(res.body.errors?.[0]?.message.length, 'a message that says what to do');
    }
    const free = await setup.fx.keyOnPlan('free');
    const big = await graphql(setup.gateway.url, free.token, query, { input: { ...good, density: new Array(10_001).fill(1e6) } });
    assert.equal(big.body.errors?.[0]?.extensions?.['code'], 'batch-too-large');
  });

  test('wrong types are refused by the schema (400)', async () => {
    const res = await graphql(setup.gateway.url, setup.key.token, query, { input: { ...good, density: ['dense'] } });
    assert.equal(res.status, 400);
    assert.equal(res.body.errors?.[0]?.extensions?.['code'], 'BAD_USER_INPUT');
    const unknown = await graphql(setup.gateway.url, setup.key.token, 'query { evaluate(input: { density: 1, temperature: 1e8, composition: { abar: 1, zbar: 1 }, fields: [entropy] }) { status } }');
    assert.equal(unknown.status, 400);
  });
});

describe('the GraphQL endpoint itself', () => {
  test('CSRF prevention: a simple cross-site request is refused', async () => {
    const res = await fetch(`${setup.gateway.url}/graphql?query=${encodeURIComponent('{ __typename }')}`);
    assert.equal(res.status, 400);
    assert.match(await res.text(), /CSRF|preflight/i);
    const form = await fetch(`${setup.gateway.url}/graphql`, { method: 'POST', headers: { 'content-type': 'text/plain' }, body: '{"query":"{ __typename }"}' });
    assert.equal(form.status, 400);
  });

  test('no landing page (it would load from a CDN)', async () => {
    const res = await fetch(`${setup.gateway.url}/graphql`, { headers: { accept: 'text/html', 'apollo-require-preflight': 'true' } });
    const text = await res.text();
    assert.doesNotMatch(text, /cdn|embeddable-sandbox|apollographql\.com/i);
  });

  test('the schema is every file of schema/graphql, merged', async () => {
    const files = fs.readdirSync(SDL_DIR).filter((f) => f.endsWith('.graphql'));
    assert.ok(files.includes('eos.graphql'), 'eos.graphql present');
    assert.equal(loadTypeDefs().length, files.length);
    for (const sdl of loadTypeDefs()) parse(sdl);
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'fw-sdl-'));
    try {
      fs.writeFileSync(path.join(dir, 'a.graphql'), 'type Query { a: Int }');
      fs.writeFileSync(path.join(dir, 'b.graphql'), 'type Query { b: Int }');
      fs.writeFileSync(path.join(dir, 'notes.txt'), 'not SDL');
      assert.deepEqual(loadTypeDefs(dir), ['type Query { a: Int }', 'type Query { b: Int }']);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
    const introspection = await graphql(setup.gateway.url, undefined, '{ __schema { queryType { fields { name } } } }');
    const names = introspection.body.data.__schema.queryType.fields.map((f: { name: string }) => f.name);
    for (const n of ['evaluate', 'invert', 'regime']) assert.ok(names.includes(n), `Query.${n}`);
  });
});
