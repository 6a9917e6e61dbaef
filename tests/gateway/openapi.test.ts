/**
 * The API contract: schema/openapi.yaml is a valid OpenAPI 3.1 document (alone and merged with
 * the feature fragments), is served at /openapi.json and explored at /docs under the gateway's
 * CSP, its paths match the registered routes, its names match the eos library, the GraphQL SDL
 * and gateway/eos/fields.ts, and its examples and the live answers validate against its schemas.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import fs from 'node:fs';
import { Validator } from '@seriousme/openapi-schema-validator';
import { Ajv2020 } from 'ajv/dist/2020.js';
import type { GraphQLEnumType, GraphQLObjectType } from 'graphql';
import { makeExecutableSchema } from '@graphql-tools/schema';
import type { Router } from 'express';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { postJson } from '../support/api.js';
import { launchBrowser } from '../support/browser.js';
import { OPENAPI_FILE, openApiDocument, readYaml } from '../../gateway/docs/document.js';
import { loadTypeDefs } from '../../gateway/graphql/server.js';
import { COMPONENT_FIELDS, EVALUATE_FIELDS, INPUT_FIELDS, INVERT_OUTPUT_FIELDS, REGIME_FIELDS, REGIME_NUMERIC_COLUMNS, STATE_FIELDS } from '../../gateway/eos/fields.js';
import { BUILTIN_MIXTURES } from '../../gateway/eos/builtin-mixtures.js';
import { createApp } from '../../gateway/app.js';
import { EOS_OPERATIONS } from '../../gateway/eos/routes.js';
import { loadConfig } from '../../gateway/config.js';
import { createDb } from '../../gateway/db.js';
import { createLogger } from '../../gateway/logger.js';
import * as eos from '../../eos/index.js';
import type { RunningGateway } from '../../gateway/server.js';

const main = readYaml(OPENAPI_FILE);
const merged = openApiDocument();
const schemas = main['components']['schemas'];
const METHODS = ['get', 'post', 'put', 'patch', 'delete'];

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey;

before(async () => {
  gateway = await startTestGateway();
  fx = new Fixtures();
  key = await fx.keyOnPlan('group');
});
after(async () => {
  await gateway.close();
  await fx.close();
});

describe('the document', () => {
  test('schema/openapi.yaml is a valid OpenAPI 3.1 document, alone and merged with the feature fragments', async () => {
    assert.equal(main['openapi'], '3.1.0');
    for (const [name, doc] of [['openapi.yaml', main], ['merged', merged]] as const) {
      const result = await new Validator().validate(structuredClone(doc));
      assert.equal(result.valid, true, `${name}: ${JSON.stringify(result.errors)}`);
    }
  });

  test('/openapi.json serves it as JSON', async () => {
    const res = await fetch(`${gateway.url}/openapi.json`);
    assert.equal(res.status, 200);
    assert.match(res.headers.get('content-type') ?? '', /^application\/json/);
    assert.deepEqual(await res.json(), merged);
  });

  test('the model\'s domain and assumptions are stated, and every EOS field carries a description', () => {
    const text = main['info']['description'] as string;
    for (const phrase of ['[1e3, 1e13] K', '[1e-12, 1e15] g/cm³', '1 ≤ Abar ≤ 300', 'min(Abar, 120)', 'fully ionized', 'neutron drip', 'Coulomb corrections', 'CGS']) {
      assert.ok(text.includes(phrase), `info.description states ${phrase}`);
    }
    for (const op of ['/v1/eos/evaluate', '/v1/eos/invert', '/v1/eos/regime']) {
      const description = main['paths'][op]['post']['description'] as string;
      assert.ok(/domain|model/.test(description), `${op} states the domain`);
    }
    for (const [name, schema] of Object.entries<any>(schemas['StateValues']['properties'])) {
      assert.ok(typeof schema.description === 'string' && schema.description.length > 5, `StateValues.${name} described`);
    }
    assert.equal(main['components']['securitySchemes']['apiKey']['scheme'], 'bearer');
    assert.equal(main['components']['securitySchemes']['apiKey']['bearerFormat'], 'fwk_<8-char id>_<32-char secret>');
  });
});

describe('names agree with the library, the field list and the GraphQL SDL', () => {
  // merged as the gateway merges them (several files may each add to type Query)
  const sdl = makeExecutableSchema({ typeDefs: loadTypeDefs() });
  const enumValues = (name: string) => (sdl.getType(name) as GraphQLEnumType).getValues().map((v) => v.name);
  const objectFields = (name: string) => Object.keys((sdl.getType(name) as GraphQLObjectType).getFields());

  test('output fields', () => {
    assert.deepEqual(schemas['StateField']['enum'], [...STATE_FIELDS]);
    assert.deepEqual(schemas['InputField']['enum'], [...INPUT_FIELDS]);
    assert.deepEqual(Object.keys(schemas['StateValues']['properties']), [...STATE_FIELDS, ...INPUT_FIELDS, 'iterations', 'converged']);
    assert.deepEqual(Object.keys(schemas['ComponentValues']['properties']), [...COMPONENT_FIELDS]);
    assert.deepEqual(schemas['RegimeField']['enum'], [...REGIME_FIELDS]);
    assert.deepEqual(schemas['RegimeNumericField']['enum'], [...REGIME_NUMERIC_COLUMNS]);
    assert.deepEqual(enumValues('EvaluateField'), [...EVALUATE_FIELDS]);
    assert.deepEqual(enumValues('InvertField'), [...INVERT_OUTPUT_FIELDS]);
    assert.deepEqual(enumValues('RegimeField'), [...REGIME_FIELDS]);
    assert.deepEqual(objectFields('StateValues'), Object.keys(schemas['StateValues']['properties']));
    assert.deepEqual(objectFields('ComponentValues'), [...COMPONENT_FIELDS]);
    assert.deepEqual(objectFields('Meta'), schemas['Meta']['required']);
    assert.deepEqual(objectFields('EvaluateResult'), Object.keys(schemas['EvaluateResponse']['properties']));
    assert.deepEqual(objectFields('RegimeValues'), Object.keys(schemas['RegimeValues']['properties']));
  });

  test('the library computes every documented state field', () => {
    const res = eos.evaluate({ density: 1e6, temperature: 1e8, abar: 12, zbar: 6 }) as unknown as Record<string, unknown>;
    for (const f of [...STATE_FIELDS, ...INPUT_FIELDS]) assert.ok(res[f] instanceof Float64Array, `eos returns ${f}`);
  });

  test('request field names match between REST and GraphQL inputs', () => {
    const input = (name: string) => Object.keys((sdl.getType(name) as unknown as { getFields(): Record<string, unknown> }).getFields());
    assert.deepEqual(input('EvaluateInput'), Object.keys(schemas['EvaluateRequest']['properties']));
    assert.deepEqual(input('InvertInput'), Object.keys(schemas['InvertRequest']['properties']));
    assert.deepEqual(input('RegimeInput'), Object.keys(schemas['RegimeRequest']['properties']));
    assert.deepEqual(input('NuclideInput'), Object.keys(schemas['Nuclide']['properties']));
  });

  test('every status code, warning, component and built-in mixture is documented', () => {
    const status = schemas['PointStatus']['description'] as string;
    for (const [name, code] of Object.entries(eos.STATUS)) assert.ok(status.includes(`${code} \`${name}\``), `status ${code} ${name} documented`);
    assert.ok(status.includes('20 `NON_FINITE_OUTPUT`'), 'the gateway status documented');
    const warnings = schemas['WarningFlags']['description'] as string;
    for (const [name, bit] of Object.entries(eos.WARNING)) assert.ok(warnings.includes(`${bit} \`${name}\``), `warning ${name} documented`);
    assert.deepEqual(schemas['Component']['enum'], [...eos.COMPONENT_NAMES]);
    const mixtures = schemas['MixtureName']['description'] as string;
    for (const m of BUILTIN_MIXTURES) {
      assert.ok(mixtures.includes(`\`${m.name}\``), `mixture ${m.name} documented`);
      const sum = m.nuclides.reduce((s, n) => s + n.massFraction, 0);
      assert.ok(Math.abs(sum - 1) < 1e-12, `${m.name} fractions sum to 1`);
    }
  });
});

describe('paths and routes', () => {
  test('every documented operation of schema/openapi.yaml answers (no 404)', async () => {
    for (const [p, item] of Object.entries<any>(main['paths'])) {
      for (const method of METHODS.filter((m) => item[m])) {
        const res = await fetch(`${gateway.url}${p}`, {
          method: method.toUpperCase(),
          headers: { 'content-type': 'application/json', authorization: `Bearer ${key.token}` },
          ...(method === 'get' ? {} : { body: '{}' }),
        });
        const text = await res.text();
        assert.notEqual(res.status, 404, `${method.toUpperCase()} ${p}: ${text.slice(0, 200)}`);
        assert.ok(res.status < 500, `${method.toUpperCase()} ${p} answered ${res.status}`);
      }
    }
  });

  test('the routes under /v1/eos are exactly the documented ones', async () => {
    const config = loadConfig({ ...process.env, DATABASE_URL: testDatabaseUrl(), LOG_LEVEL: 'silent', EOS_POOL_MIN_THREADS: '0' });
    const db = createDb(config.DATABASE_URL, 1);
    const { app, services } = await createApp({ config, db, logger: createLogger('silent') });
    try {
      const routes: string[] = [];
      const walk = (stack: any[], prefix: string) => {
        for (const layer of stack) {
          if (layer.route) {
            for (const m of Object.keys(layer.route.methods).filter((m) => m !== '_all')) routes.push(`${m.toUpperCase()} ${prefix}${layer.route.path}`);
          } else if (layer.handle?.stack) {
            const mount = typeof layer.rawPath === 'string' && layer.rawPath !== '/' ? layer.rawPath : '';
            walk(layer.handle.stack, prefix + mount);
          }
        }
      };
      walk((app as unknown as { router: Router & { stack: unknown[] } }).router.stack, '');
      // the EOS API is one middleware (no Express routes, for speed): its operations, all POST
      routes.push(...Object.keys(EOS_OPERATIONS).map((p) => `POST ${p}`));
      const eosRoutes = routes.filter((r) => r.includes(' /v1/eos')).sort();
      const documented = Object.entries<any>(main['paths'])
        .filter(([p]) => p.startsWith('/v1/eos'))
        .flatMap(([p, item]) => METHODS.filter((m) => item[m]).map((m) => `${m.toUpperCase()} ${p}`))
        .sort();
      assert.deepEqual(eosRoutes, documented);
      for (const p of ['GET /healthz', 'GET /readyz', 'GET /openapi.json', 'GET /metrics']) assert.ok(routes.includes(p), `${p} registered`);
    } finally {
      await services.close();
      await db.destroy();
    }
  });
});

describe('examples and answers validate against the schemas', () => {
  const ajv = new Ajv2020({ strict: false, allErrors: true, validateFormats: false });
  ajv.addSchema({ ...structuredClone(main), $id: 'fermiwell' });
  const check = (schema: string, value: unknown) => {
    const validate = ajv.getSchema(`fermiwell#/components/schemas/${schema}`)!;
    assert.ok(validate(value), `${schema}: ${JSON.stringify(validate.errors)}`);
  };

  test('request and response examples', () => {
    for (const [p, item] of Object.entries<any>(main['paths'])) {
      const op = item['post'];
      const json = op?.['requestBody']?.['content']?.['application/json'];
      const ref = json?.['schema']?.['$ref'] as string | undefined;
      if (!ref?.startsWith('#/components/schemas/')) continue;
      for (const [name, example] of Object.entries<any>(json['examples'] ?? {})) {
        assert.ok(example.value, `${p} ${name}`);
        check(ref.split('/').pop()!, example.value);
      }
    }
    check('EvaluateResponse', main['components']['examples']['EvaluateResponseExample']['value']);
    check('InvertResponse', main['components']['examples']['InvertResponseExample']['value']);
    check('RegimeResponse', main['components']['examples']['RegimeResponseExample']['value']);
  });

  test('live answers', async () => {
    const evaluate = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density: [1e6, 1e16], temperature: 1e8, composition: { mixture: 'c12-o16' }, breakdown: true, maxwellResiduals: true });
    check('EvaluateResponse', evaluate.body);
    const invert = await postJson(`${gateway.url}/v1/eos/invert`, key.token, { density: 1e6, specificEnergy: [1e17, 1e40], composition: { abar: 4, zbar: 2 } });
    check('InvertResponse', invert.body);
    const regime = await postJson(`${gateway.url}/v1/eos/regime`, key.token, { density: [1e6, -1], temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: [...REGIME_FIELDS] });
    check('RegimeResponse', regime.body);
    const problem = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density: 'x' });
    check('Problem', problem.body);
  });
});

describe('/docs', () => {
  test('the explorer is served from our own origin', async () => {
    const redirect = await fetch(`${gateway.url}/docs`, { redirect: 'manual' });
    assert.equal(redirect.status, 301);
    assert.equal(redirect.headers.get('location'), '/docs/');
    const page = await fetch(`${gateway.url}/docs/`);
    assert.equal(page.status, 200);
    assert.match(page.headers.get('content-security-policy') ?? '', /script-src 'self'/);
    const html = await page.text();
    assert.match(html, /<title>Fermiwell API reference<\/title>/);
    assert.doesNotMatch(html, /src=["']https?:/, 'no script from another origin');
    const init = await (await fetch(`${gateway.url}/docs/swagger-ui-init.js`)).text();
    assert.match(init, /"swaggerUrl": "\/openapi.json"/);
    assert.equal((await fetch(`${gateway.url}/docs/swagger-ui-bundle.js`)).status, 200);
  });

  test('it renders in a browser under the CSP, with no request leaving the origin', async () => {
    const browser = await launchBrowser();
    try {
      const page = await browser.newPage();
      const violations: string[] = [];
      const foreign: string[] = [];
      page.on('console', (msg) => {
        if (/Content Security Policy|Refused to/i.test(msg.text())) violations.push(msg.text());
      });
      page.on('request', (req) => {
        if (!req.url().startsWith(gateway.url) && !req.url().startsWith('data:')) foreign.push(req.url());
      });
      await page.goto(`${gateway.url}/docs/`);
      await page.waitForSelector('.swagger-ui .info .title', { timeout: 20_000 });
      const title = await page.textContent('.swagger-ui .info .title');
      assert.match(title ?? '', /Fermiwell API/);
      await page.waitForSelector('.opblock-summary-path[data-path="/v1/eos/evaluate"]', { timeout: 20_000 });
      assert.deepEqual(violations, []);
      assert.deepEqual(foreign, []);
    } finally {
      await browser.close();
    }
  });
});

test('the schema folder holds the contract files', () => {
  const dir = path.dirname(OPENAPI_FILE);
  assert.ok(fs.existsSync(path.join(dir, 'graphql', 'eos.graphql')), 'eos.graphql');
});
