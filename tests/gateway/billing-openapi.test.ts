/**
 * schema/openapi-billing.yaml is a valid OpenAPI 3.1 document, describes exactly the routes the
 * billing router registers, and the live answers of a gateway match its schemas (plans, overview,
 * plan change, invoices, problems).
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import { Validator } from '@seriousme/openapi-schema-validator';
import type { Knex } from 'knex';
import type { Router } from 'express';
import { repoRoot } from '../../gateway/config.js';
import { billingRoutes } from '../../gateway/billing/routes.js';
import type { Services } from '../../gateway/services.js';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser } from '../support/accounts.js';
import { CARDS, futureExpiry } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import type { RunningGateway } from '../../gateway/server.js';

const document = YAML.parse(fs.readFileSync(path.join(repoRoot, 'schema', 'openapi-billing.yaml'), 'utf8'));

test('the billing OpenAPI document is valid OpenAPI 3.1', async () => {
  const result = await new Validator().validate(document);
  assert.equal(result.valid, true, JSON.stringify(result.errors, null, 1));
});

test('every billing route is documented, and every documented path is a route', () => {
  const noop = (_req: unknown, _res: unknown, next: () => void) => next();
  const services = { auth: {}, access: {}, billing: {}, billingWebhooks: {}, config: {}, authLimits: new Proxy({}, { get: () => noop }) } as unknown as Services;
  const routes = new Set<string>();
  for (const layer of (billingRoutes(services) as Router).stack as Array<{ route?: { path: string; methods: Record<string, boolean> } }>) {
    if (!layer.route) continue;
    for (const method of Object.keys(layer.route.methods)) routes.add(`${method.toUpperCase()} ${layer.route.path.replace(/:(\w+)/g, '{$1}')}`);
  }
  const documented = new Set<string>();
  for (const [p, item] of Object.entries(document.paths as Record<string, Record<string, unknown>>)) {
    for (const method of ['get', 'post', 'put', 'patch', 'delete']) if (item[method]) documented.add(`${method.toUpperCase()} ${p}`);
  }
  assert.deepEqual([...routes].sort(), [...documented].sort());
});

// ── live answers against the documented schemas (a small JSON-schema check of required fields and types) ──

let gateway: RunningGateway;
let db: Knex;

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
});
after(async () => {
  await gateway?.close();
  await db?.destroy();
});

function resolve(schema: any): any {
  if (schema?.$ref) return resolve(document.components.schemas[schema.$ref.split('/').pop()]);
  return schema;
}

/** Checks `value` against the document's schema: required fields, types, enums, nested objects and arrays. */
function conforms(value: unknown, schemaIn: any, where: string): void {
  const schema = resolve(schemaIn);
  if (schema.oneOf) {
    const errors: string[] = [];
    for (const option of schema.oneOf) {
      try {
        conforms(value, option, where);
        return;
      } catch (error) {
        errors.push(String(error));
      }
    }
    assert.fail(`${where}: matches no oneOf option: ${errors.join(' / ')}`);
  }
  const types: string[] = Array.isArray(schema.type) ? schema.type : schema.type ? [schema.type] : [];
  if (types.length) {
    const actual = value === null ? 'null' : Array.isArray(value) ? 'array' : Number.isInteger(value) ? 'integer' : typeof value;
    assert.ok(types.includes(actual) || (actual === 'integer' && types.includes('number')), `${where}: ${actual} is not ${types.join('|')}`);
  }
  if (schema.enum) assert.ok(schema.enum.includes(value), `${where}: ${String(value)} not in ${schema.enum.join(', ')}`);
  if (schema.const !== undefined) assert.equal(value, schema.const, where);
  if (value && typeof value === 'object' && !Array.isArray(value)) {
    for (const key of schema.required ?? []) assert.ok(key in (value as object), `${where}: ${key} missing`);
    for (const [key, sub] of Object.entries(schema.properties ?? {})) if (key in (value as object)) conforms((value as Record<string, unknown>)[key], sub, `${where}.${key}`);
  }
  if (Array.isArray(value) && schema.items) value.forEach((v, i) => conforms(v, schema.items, `${where}[${i}]`));
}

const responseSchema = (p: string, method: string, status: string) => {
  const content = document.paths[p][method].responses[status].content ?? document.components.responses[document.paths[p][method].responses[status].$ref?.split('/').pop()]?.content;
  return (content['application/json'] ?? content['application/problem+json']).schema;
};

test('live answers match the documented schemas', async () => {
  const owner = await makeUser(db, 'schema-owner');
  const org = await makeOrganisation(db, [[owner, 'owner']], 'schema');
  const client = new Client(gateway.url);
  await client.signIn(owner.email, owner.password);
  const base = `/v1/organisations/${org.id}/billing`;

  conforms((await client.get('/v1/plans')).body, responseSchema('/v1/plans', 'get', '200'), 'GET /v1/plans');
  conforms((await client.get(base)).body, responseSchema('/v1/organisations/{orgId}/billing', 'get', '200'), 'GET billing');
  const card = await client.call('PUT', `${base}/card`, { number: CARDS.visa, ...futureExpiry() });
  conforms(card.body, responseSchema('/v1/organisations/{orgId}/billing/card', 'put', '200'), 'PUT card');
  const change = await client.call('PUT', `${base}/plan`, { plan: 'group' });
  assert.equal(change.status, 200);
  conforms(change.body, responseSchema('/v1/organisations/{orgId}/billing/plan', 'put', '200'), 'PUT plan');
  const invoices = await client.get(`${base}/invoices`);
  conforms(invoices.body, responseSchema('/v1/organisations/{orgId}/billing/invoices', 'get', '200'), 'GET invoices');
  conforms((await client.get(`${base}/invoices/${invoices.body.items[0].id}`)).body, responseSchema('/v1/organisations/{orgId}/billing/invoices/{invoiceId}', 'get', '200'), 'GET invoice');
  const problem = await client.call('PUT', `${base}/plan`, { plan: 'platinum' });
  conforms(problem.body, responseSchema('/v1/organisations/{orgId}/billing/plan', 'put', '400'), 'problem');
});
