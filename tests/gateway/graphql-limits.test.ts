/**
 * GraphQL operation limits (gateway/graphql/limits.ts) and the bounded document cache
 * (gateway/graphql/document-cache.ts): what one request may ask for, what the dashboard and
 * introspection need, and that a refusal is a 400 with code `query-too-complex` before anything runs.
 */
import { describe, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import v8 from 'node:v8';
import vm from 'node:vm';
import { getIntrospectionQuery, Kind, parse, type DocumentNode, type FragmentDefinitionNode, type OperationDefinitionNode } from 'graphql';
import { operationSize, QUERY_LIMITS } from '../../gateway/graphql/limits.js';
import { documentCache } from '../../gateway/graphql/document-cache.js';
import { repoRoot } from '../../gateway/config.js';
import { useGatewayWithKey } from '../support/gateway-with-key.js';
import { graphql } from '../support/api.js';

function sizeOf(source: string) {
  const doc = parse(source);
  const fragments = new Map(doc.definitions.filter((d): d is FragmentDefinitionNode => d.kind === Kind.FRAGMENT_DEFINITION).map((d) => [d.name.value, d]));
  const operation = doc.definitions.find((d): d is OperationDefinitionNode => d.kind === Kind.OPERATION_DEFINITION)!;
  return operationSize(operation, (name) => fragments.get(name));
}

const aliases = (n: number, field: string) => Array.from({ length: n }, (_, i) => `a${i}: ${field}`).join(' ');
const EVALUATE = 'evaluate(input: $input) { meta { points } }';
const INPUT = { density: [1e6], temperature: [1e7], composition: { abar: 12, zbar: 6 }, fields: ['pressure'] };

describe('operation size', () => {
  test('the standard introspection query and every query of the dashboard are within the limits', () => {
    const introspection = sizeOf(getIntrospectionQuery({ descriptions: true, specifiedByUrl: true, directiveIsRepeatable: true, schemaDescription: true, inputValueDeprecation: true }));
    assert.equal(introspection.stopped, false, JSON.stringify(introspection));
    assert.ok(introspection.depth <= QUERY_LIMITS.maxDepth && introspection.fields <= QUERY_LIMITS.maxFields, JSON.stringify(introspection));
    const dir = path.join(repoRoot, 'dashboard', 'src', 'app');
    const files = (fs.readdirSync(dir, { recursive: true }) as string[]).filter((f) => f.endsWith('.ts') && !f.endsWith('.spec.ts'));
    const queries = files.flatMap((f) => [...fs.readFileSync(path.join(dir, f), 'utf8').matchAll(/`\s*((?:query|mutation)\b[^`]*)`/g)].map((m) => m[1]!).filter((q) => !q.includes('${')));
    assert.ok(queries.length >= 3, `dashboard queries found: ${queries.length}`);
    for (const q of queries) assert.equal(sizeOf(q).stopped, false, q);
  });

  test('counts aliases, nesting, and each fragment where it is spread', () => {
    assert.deepEqual(sizeOf('{ me { id email } a: plans { id } }'), { depth: 2, fields: 5, evaluations: 0, stopped: false });
    assert.equal(sizeOf(`query($input: EvaluateInput!) { ${aliases(10, EVALUATE)} }`).evaluations, 10);
    assert.equal(sizeOf(`query($input: EvaluateInput!) { ...F ...F } fragment F on Query { ${EVALUATE} }`).evaluations, 2);
    assert.equal(sizeOf(`query($input: EvaluateInput!) { ${aliases(11, EVALUATE)} }`).stopped, true);
    // mutations have no evaluation fields of that name: only query roots count
    assert.equal(sizeOf('mutation { evaluate { x } }').evaluations, 0);
  });

  test('a fragment "bomb" (10 levels, each spreading the next 10 times: 10^10 fields) is refused after a bounded walk', () => {
    const levels = Array.from({ length: 10 }, (_, i) => `fragment F${i} on Query { ${i === 9 ? 'plans { id }' : Array.from({ length: 10 }, () => `...F${i + 1}`).join(' ')} }`);
    const size = sizeOf(`query { ...F0 } ${levels.join(' ')}`);
    assert.equal(size.stopped, true);
    // the walk stopped just past the limit instead of visiting 10^10 fields
    assert.ok(size.fields > QUERY_LIMITS.maxFields && size.fields <= QUERY_LIMITS.maxFields + 2, JSON.stringify(size));
  });

  test('a fragment cycle does not loop (graphql-js reports it)', () => {
    assert.equal(sizeOf('query { ...A } fragment A on Query { plans { id } ...B } fragment B on Query { ...A }').stopped, false);
  });
});

describe('the document cache', () => {
  test('stays bounded when every request brings a new valid document', () => {
    v8.setFlagsFromString('--expose-gc');
    const gc = vm.runInNewContext('gc') as () => void;
    const cache = documentCache();
    const doc = (i: number): DocumentNode => parse(`query Q${i}($id: ID!) { me { id email displayName } organisations { id name slug } usage(organisationId: $id) { from to } jobs(organisationId: $id) { id state } }`);
    gc();
    const before = process.memoryUsage().heapUsed;
    for (let i = 0; i < 6_000; i++) void cache.set(`k${i}`, doc(i));
    gc();
    const grown = process.memoryUsage().heapUsed - before;
    // ~22 kB of heap per such document: Apollo's default cache (30 MiB by its estimate) would keep all
    // 6 000 here, ~130 MB; this one keeps the last few hundred (measured ~8 MB)
    assert.ok(grown < 20 * 1024 * 1024, `heap grew ${(grown / 1048576).toFixed(1)} MB`);
    assert.ok(cache.keys().length < 1_000 && cache.keys().length > 100, `documents kept: ${cache.keys().length}`);
  });
});

describe('over HTTP', () => {
  const setup = useGatewayWithKey({ EOS_TABLE_PATH: '' }, 'group');

  test(`${QUERY_LIMITS.maxEvaluations} aliased evaluations in one request are answered`, async () => {
    const answer = await graphql(setup.gateway.url, setup.key.token, `query($input: EvaluateInput!) { ${aliases(QUERY_LIMITS.maxEvaluations, EVALUATE)} }`, { input: INPUT });
    assert.equal(answer.status, 200, JSON.stringify(answer.body.errors));
    assert.equal(Object.keys(answer.body.data ?? {}).length, QUERY_LIMITS.maxEvaluations);
  });

  test('one more is a 400 query-too-complex, and nothing is evaluated', async () => {
    const answer = await graphql(setup.gateway.url, setup.key.token, `query Many($input: EvaluateInput!) { ${aliases(QUERY_LIMITS.maxEvaluations + 1, EVALUATE)} }`, { input: INPUT });
    assert.equal(answer.status, 400);
    assert.equal(answer.body.data, undefined);
    const error = answer.body.errors?.[0];
    assert.equal(error?.extensions?.['code'], 'query-too-complex', JSON.stringify(answer.body));
    assert.equal(error?.extensions?.['status'], 400);
    assert.match(error!.message, /operation "Many" asks for more than 10 evaluate\/invert\/regime fields/);
    assert.deepEqual(error?.extensions?.['problem']?.limits, QUERY_LIMITS);
  });

  test('too many fields (aliased __typename) and too deep a selection are refused, signed in or not', async () => {
    const wide = await graphql(setup.gateway.url, undefined, `{ ${aliases(QUERY_LIMITS.maxFields + 1, '__typename')} }`);
    assert.equal(wide.status, 400);
    assert.equal(wide.body.errors?.[0]?.extensions?.['code'], 'query-too-complex');
    assert.match(wide.body.errors![0]!.message, /more than 1000 fields/);
    const deep = await graphql(setup.gateway.url, undefined, `{ __schema { types { fields { type ${'{ ofType '.repeat(QUERY_LIMITS.maxDepth)}{ name }${' }'.repeat(QUERY_LIMITS.maxDepth)} } } } }`);
    assert.equal(deep.status, 400);
    assert.equal(deep.body.errors?.[0]?.extensions?.['code'], 'query-too-complex');
    assert.match(deep.body.errors![0]!.message, /nests fields more than 20 deep/);
  });

  test('introspection still works', async () => {
    const answer = await graphql(setup.gateway.url, undefined, getIntrospectionQuery());
    assert.equal(answer.status, 200, JSON.stringify(answer.body.errors));
    assert.ok((answer.body.data as { __schema: { types: unknown[] } }).__schema.types.length > 20);
  });
});
