/**
 * A seeded property-based fuzzer of the gateway's public routes, shared by
 * tests/reliability/fuzz.test.ts (a small run in `npm test`) and scripts/soak.ts (the full run).
 *
 * fast-check generates each request from one seed: a route of FUZZ_ROUTES, a method, credentials
 * (real ones for a share, so the fuzz reaches past authentication), path parameters, a query string,
 * headers and a body — a valid template, a mutated template (fields replaced by boundary numbers,
 * wrong types, long strings, deep nesting; fields dropped or added), arbitrary JSON, malformed text,
 * an oversized body, random bytes, or a multipart upload with random file content. Requests are
 * sampled with `fc.sample` (no shrinking: a failing request is reported whole, with its seed).
 *
 * The properties checked on every answer: no status ≥ 500; every REST 4xx is
 * application/problem+json with string type/title/detail and a matching status; every GraphQL error
 * carries extensions.code. After each batch /healthz must answer 200. The heap (after a forced GC)
 * is read before any request, after a warm-up that touches every route (warmUpRequests: the
 * baseline), after each batch and at the end; the test compares the end with the baseline.
 */
import { randomUUID } from 'node:crypto';
import v8 from 'node:v8';
import vm from 'node:vm';
import fc from 'fast-check';

// ── the routes ───────────────────────────────────────────────────────────────────────────────

/** Who a route is meant for: the credential tried for the "right" share of requests. */
type RequestBody = string | Buffer | FormData;
type Audience = 'public' | 'key' | 'session' | 'operator' | 'key-or-session' | 'webhook';
/** What the body looks like when valid. */
type BodyKind = 'json' | 'none' | 'eos' | 'multipart' | 'graphql' | 'webhook';

export interface FuzzRoute {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  /** Express path with :params (exactly as registered, so the security test can match the router stack). */
  path: string;
  audience: Audience;
  body: BodyKind;
  /** A valid-looking body the mutations start from. */
  template?: unknown;
  /** Query parameters the route knows (fuzzed alongside unknown ones). */
  query?: string[];
  /** Never send the real organisation/session as the target of this route (it would end the run's own credentials). */
  destructive?: boolean;
}

const EOS_EVALUATE = { density: [1e6, 3.2e7], temperature: [1e7, 2e8], composition: { abar: 12, zbar: 6 }, fields: ['pressure', 'energy'] };
const EOS_INVERT = { density: [1e6], pressure: [1e22], composition: { mixture: 'c12-o16' } };
const EOS_REGIME = { density: [1e3, 1e9], temperature: [1e6, 1e9], composition: { mixture: 'he4' } };
const MIXTURE = { name: 'Fuzz mixture', nuclides: [{ a: 12, z: 6, massFraction: 0.5 }, { a: 16, z: 8, massFraction: 0.5 }] };
// an over-large grid: 422 when valid, so the fuzz never queues a real table build by accident
const TABLE = { name: 'fuzz grid', grid: { logDensityYeMin: -15, logDensityYeMax: 15, logTemperatureMin: 3, logTemperatureMax: 13, pointsPerDecade: 100 }, composition: { mixture: 'he4' } };

export const FUZZ_ROUTES: readonly FuzzRoute[] = [
  // EOS (JSON and binary)
  { method: 'POST', path: '/v1/eos/evaluate', audience: 'key', body: 'eos', template: EOS_EVALUATE, query: ['inputs', 'fields', 'components', 'method', 'soundSpeed', 'mixture', 'abar', 'zbar'] },
  { method: 'POST', path: '/v1/eos/invert', audience: 'key', body: 'eos', template: EOS_INVERT, query: ['inputs', 'fields', 'mixture', 'tolerance', 'maxEvaluations', 'abar', 'zbar'] },
  { method: 'POST', path: '/v1/eos/regime', audience: 'key', body: 'eos', template: EOS_REGIME, query: ['inputs', 'mixture', 'abar', 'zbar'] },
  // GraphQL
  { method: 'POST', path: '/graphql', audience: 'key-or-session', body: 'graphql' },
  // uploads and table builds
  { method: 'POST', path: '/v1/jobs', audience: 'key', body: 'multipart' },
  { method: 'GET', path: '/v1/jobs', audience: 'key-or-session', body: 'none', query: ['limit', 'organisationId'] },
  { method: 'GET', path: '/v1/jobs/:id', audience: 'key-or-session', body: 'none' },
  { method: 'POST', path: '/v1/jobs/:id/cancel', audience: 'key-or-session', body: 'json', template: {} },
  { method: 'GET', path: '/v1/jobs/:id/results', audience: 'key-or-session', body: 'none', query: ['format'] },
  { method: 'GET', path: '/v1/jobs/:id/upload', audience: 'key-or-session', body: 'none' },
  { method: 'POST', path: '/v1/tables', audience: 'key', body: 'json', template: TABLE },
  { method: 'GET', path: '/v1/tables', audience: 'key-or-session', body: 'none', query: ['limit'] },
  { method: 'GET', path: '/v1/tables/:id', audience: 'key-or-session', body: 'none' },
  { method: 'POST', path: '/v1/tables/:id/cancel', audience: 'key-or-session', body: 'json', template: {} },
  { method: 'GET', path: '/v1/tables/:id/file', audience: 'key-or-session', body: 'none' },
  // accounts
  { method: 'POST', path: '/v1/auth/sign-up', audience: 'public', body: 'json', template: { email: 'fuzz@tests.fermiwell.invalid', password: 'a long enough pass phrase', displayName: 'Fuzz' } },
  { method: 'POST', path: '/v1/auth/verify-email', audience: 'public', body: 'json', template: { token: 'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA' } },
  { method: 'POST', path: '/v1/auth/verify-email/resend', audience: 'public', body: 'json', template: { email: 'fuzz@tests.fermiwell.invalid' } },
  { method: 'POST', path: '/v1/auth/session', audience: 'public', body: 'json', template: { email: 'decoy@tests.fermiwell.invalid', password: 'not the password' } },
  { method: 'POST', path: '/v1/auth/session/refresh', audience: 'session', body: 'json', template: {} },
  { method: 'DELETE', path: '/v1/auth/session', audience: 'session', body: 'none', destructive: true },
  { method: 'POST', path: '/v1/auth/password/forgot', audience: 'public', body: 'json', template: { email: 'fuzz@tests.fermiwell.invalid' } },
  { method: 'POST', path: '/v1/auth/password/reset', audience: 'public', body: 'json', template: { token: 'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA', password: 'a long enough pass phrase' } },
  { method: 'POST', path: '/v1/auth/password/change', audience: 'session', body: 'json', template: { currentPassword: 'not the password', newPassword: 'another long pass phrase' } },
  { method: 'GET', path: '/v1/me', audience: 'session', body: 'none' },
  { method: 'PATCH', path: '/v1/me', audience: 'session', body: 'json', template: { displayName: 'Fuzz Person' } },
  // organisations, members, invitations, audit
  { method: 'GET', path: '/v1/organisations', audience: 'session', body: 'none', query: ['all'] },
  { method: 'POST', path: '/v1/organisations', audience: 'session', body: 'json', template: { name: 'Fuzz group' } },
  { method: 'GET', path: '/v1/organisations/:orgId', audience: 'session', body: 'none' },
  { method: 'PATCH', path: '/v1/organisations/:orgId', audience: 'session', body: 'json', template: { name: 'Fuzz group renamed' } },
  { method: 'DELETE', path: '/v1/organisations/:orgId', audience: 'session', body: 'none', destructive: true },
  { method: 'GET', path: '/v1/organisations/:orgId/permissions', audience: 'session', body: 'none' },
  { method: 'GET', path: '/v1/organisations/:orgId/members', audience: 'session', body: 'none' },
  { method: 'PATCH', path: '/v1/organisations/:orgId/members/:userId', audience: 'session', body: 'json', template: { role: 'viewer' }, destructive: true },
  { method: 'DELETE', path: '/v1/organisations/:orgId/members/:userId', audience: 'session', body: 'none', destructive: true },
  { method: 'GET', path: '/v1/organisations/:orgId/invitations', audience: 'session', body: 'none' },
  { method: 'POST', path: '/v1/organisations/:orgId/invitations', audience: 'session', body: 'json', template: { email: 'invitee@tests.fermiwell.invalid', role: 'developer' } },
  { method: 'DELETE', path: '/v1/organisations/:orgId/invitations/:invitationId', audience: 'session', body: 'none' },
  { method: 'GET', path: '/v1/organisations/:orgId/audit-log', audience: 'session', body: 'none', query: ['limit', 'before', 'action'] },
  { method: 'POST', path: '/v1/invitations/preview', audience: 'public', body: 'json', template: { token: 'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA' } },
  { method: 'POST', path: '/v1/invitations/accept', audience: 'session', body: 'json', template: { token: 'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA' } },
  // API key management
  { method: 'GET', path: '/v1/organisations/:orgId/keys', audience: 'session', body: 'none' },
  { method: 'POST', path: '/v1/organisations/:orgId/keys', audience: 'session', body: 'json', template: { name: 'fuzz key', scopes: ['eos:evaluate'], expiresAt: null } },
  { method: 'GET', path: '/v1/organisations/:orgId/keys/:keyId', audience: 'session', body: 'none' },
  { method: 'POST', path: '/v1/organisations/:orgId/keys/:keyId/rotate', audience: 'session', body: 'json', template: {} },
  { method: 'POST', path: '/v1/organisations/:orgId/keys/:keyId/revoke', audience: 'session', body: 'json', template: {} },
  // mixtures
  { method: 'GET', path: '/v1/mixtures', audience: 'key-or-session', body: 'none', query: ['organisationId'] },
  { method: 'POST', path: '/v1/mixtures', audience: 'session', body: 'json', template: MIXTURE, query: ['organisationId'] },
  { method: 'GET', path: '/v1/mixtures/:id', audience: 'key-or-session', body: 'none', query: ['organisationId'] },
  { method: 'PUT', path: '/v1/mixtures/:id', audience: 'session', body: 'json', template: MIXTURE, query: ['organisationId'] },
  { method: 'DELETE', path: '/v1/mixtures/:id', audience: 'session', body: 'none', query: ['organisationId'] },
  // usage
  { method: 'GET', path: '/v1/usage', audience: 'key-or-session', body: 'none', query: ['from', 'to', 'granularity', 'groupBy', 'format', 'organisationId'] },
  // plans and billing
  { method: 'GET', path: '/v1/plans', audience: 'public', body: 'none' },
  { method: 'GET', path: '/v1/organisations/:orgId/billing', audience: 'session', body: 'none' },
  { method: 'PUT', path: '/v1/organisations/:orgId/billing/plan', audience: 'session', body: 'json', template: { plan: 'facility' } },
  { method: 'PUT', path: '/v1/organisations/:orgId/billing/card', audience: 'session', body: 'json', template: { number: '4000 0000 0000 0002', expMonth: 12, expYear: 2030, cvc: '123' } },
  { method: 'GET', path: '/v1/organisations/:orgId/billing/invoices', audience: 'session', body: 'none' },
  { method: 'GET', path: '/v1/organisations/:orgId/billing/invoices/:invoiceId', audience: 'session', body: 'none' },
  { method: 'POST', path: '/v1/billing/webhooks', audience: 'webhook', body: 'webhook' },
  // operator
  { method: 'GET', path: '/v1/operator/organisations', audience: 'operator', body: 'none' },
  { method: 'GET', path: '/v1/operator/organisations/:orgId', audience: 'operator', body: 'none' },
  { method: 'PUT', path: '/v1/operator/organisations/:orgId/limits', audience: 'operator', body: 'json', template: { requestsPerSecond: 500, pointsPerMonth: null, maxBatch: null, note: 'fuzz' } },
  { method: 'GET', path: '/v1/operator/health', audience: 'operator', body: 'none' },
];

// ── the run's credentials and results ────────────────────────────────────────────────────────

export interface FuzzCredentials {
  /** An API key of the organisation (all scopes) on a plan with room for the fuzz rate. */
  apiKey: string;
  /** A signed-in owner of the organisation: access token and refresh cookie. */
  session: { accessToken: string; refreshCookie: string; userId: string };
  /** A signed-in platform operator. */
  operator: { accessToken: string; userId: string };
  organisationId: string;
  /** A key of the organisation that rotate/revoke may hit (not `apiKey`). */
  decoyKeyId: string;
  /** A saved mixture of the organisation. */
  mixtureId?: string;
  /** Renews `session` when the fuzz ended it (sign-out, refresh-token reuse): called after each batch. */
  renew?: (which: 'session' | 'operator') => Promise<void>;
}

export interface FuzzFinding {
  kind: 'server-error' | 'not-problem-json' | 'graphql-error-without-code' | 'transport';
  method: string;
  url: string;
  status: number;
  request: string;
  answer: string;
}

export interface FuzzOptions {
  baseUrl: string;
  seed: number;
  requests: number;
  credentials: FuzzCredentials;
  batchSize?: number;
  concurrency?: number;
  /** Touch every route once per body kind before the baseline is read (default true). */
  warmUp?: boolean;
  log?: (line: string) => void;
}

export interface FuzzFigures {
  seed: number;
  requests: number;
  byStatus: Record<string, number>;
  byRoute: Record<string, number>;
  /** Wall time spent per route (ms, summed over its requests). */
  msByRoute: Record<string, number>;
  /** 401 answers per route (with and without a credential sent). */
  unauthorizedByRoute: Record<string, number>;
  /** 401 answers by the credential chosen and the problem kind answered. */
  unauthorizedByKind: Record<string, number>;
  serverErrors: number;
  findings: FuzzFinding[];
  healthChecks: number;
  healthFailures: number;
  /** Responses that reached past authentication (status not 401/403 with a credential sent). */
  authenticatedAnswers: number;
  /** Requests of the warm-up (every route touched once per body kind), not counted in `requests`. */
  warmUpRequests: number;
  /**
   * Heap used (after a forced GC when available, with the fuzzer's own batch out of scope): before
   * any request; the baseline, after the warm-up; and at the end, each after a short settle.
   */
  heapBeforeBytes: number;
  heapWarmBytes: number;
  heapAfterBytes: number;
  /** Heap used after each batch (after forced GC): a leak shows as a steady climb. */
  heapSeries: number[];
  /** The highest of heapSeries. */
  heapPeakBytes: number;
  gcForced: boolean;
  durationMs: number;
}

// ── generators ───────────────────────────────────────────────────────────────────────────────

const boundaryNumber = fc.constantFrom(0, -0, -1, 1, 0.5, 1e-300, 5e-324, 1e308, -1e308, 1.7976931348623157e308, 2 ** 31, -(2 ** 31), 2 ** 53 + 2, Number.MAX_SAFE_INTEGER, 12, 6, 1e40, -1e40);
const nastyString = fc.constantFrom(
  '', ' ', 'null', 'undefined', 'NaN', 'Infinity', '-Infinity', '1e309', '0x1F', '{', '[]', '\u0000', '%', '%00', '%zz',
  '../../etc/passwd', "' OR 1=1 --", "'; DROP TABLE users; --", '<script>alert(1)</script>', '${7*7}', '{{7*7}}', '__proto__',
  'constructor', '\u202e\u0041', '😀😀😀', 'a'.repeat(300), 'fuzz@tests.fermiwell.invalid', '00000000-0000-0000-0000-000000000000',
  'c12-o16', 'he4', 'facility', 'owner', 'operator', 'eos:evaluate', 'csv', 'hdf5', 'table', 'exact',
);
const anyString = fc.oneof(
  { weight: 3, arbitrary: nastyString },
  { weight: 2, arbitrary: fc.string({ maxLength: 40 }) },
  { weight: 1, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.string({ minLength: 1000, maxLength: 20_000 }) },
);
const deepNest = fc.integer({ min: 50, max: 3000 }).map((depth) => {
  let value: unknown = 1;
  for (let i = 0; i < depth; i++) value = i % 2 ? { a: value } : [value];
  return value;
});
const longArray = fc.tuple(fc.integer({ min: 100, max: 60_000 }), boundaryNumber).map(([n, v]) => new Array<number>(n).fill(v));
const weirdValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 4, arbitrary: boundaryNumber },
  { weight: 4, arbitrary: anyString },
  { weight: 3, arbitrary: fc.jsonValue({ maxDepth: 3 }) },
  { weight: 1, arbitrary: fc.constantFrom(null, true, false, [], {}, [null], [[]], { mixture: null }) },
  { weight: 1, arbitrary: fc.array(fc.oneof(boundaryNumber, nastyString), { maxLength: 8 }) },
  { weight: 1, arbitrary: deepNest },
  { weight: 1, arbitrary: longArray },
);

interface Mutation {
  at: number;
  op: 'replace' | 'delete' | 'add' | 'wrap' | 'stringify';
  key: string;
  value: unknown;
}
const mutation: fc.Arbitrary<Mutation> = fc.record({
  at: fc.nat(),
  op: fc.constantFrom('replace', 'replace', 'replace', 'delete', 'add', 'wrap', 'stringify'),
  key: fc.oneof(nastyString, fc.constantFrom('density', 'temperature', 'composition', 'fields', 'mixture', 'organisationId', 'role', 'scopes', 'query', 'variables')),
  value: weirdValue,
});

/** Every (container, key) slot of a JSON value, depth-first. */
function slots(value: unknown, out: Array<[Record<string, unknown> | unknown[], string | number]> = []) {
  if (value && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) {
      out.push([value as Record<string, unknown>, Array.isArray(value) ? Number(k) : k]);
      slots(v, out);
    }
  }
  return out;
}

export function mutate(template: unknown, mutations: Mutation[]): unknown {
  const root = { root: structuredClone(template) as unknown };
  for (const m of mutations) {
    const all = slots(root);
    const [container, key] = all[m.at % all.length]!;
    const target = (container as Record<string | number, unknown>)[key];
    switch (m.op) {
      case 'replace':
        (container as Record<string | number, unknown>)[key] = m.value;
        break;
      case 'delete':
        if (container !== root) {
          if (Array.isArray(container)) container.splice(Number(key), 1);
          else delete (container as Record<string, unknown>)[key as string];
        }
        break;
      case 'add':
        if (target && typeof target === 'object' && !Array.isArray(target)) (target as Record<string, unknown>)[m.key] = m.value;
        else if (Array.isArray(target)) target.push(m.value);
        break;
      case 'wrap':
        (container as Record<string | number, unknown>)[key] = [target];
        break;
      case 'stringify':
        (container as Record<string | number, unknown>)[key] = JSON.stringify(target ?? null);
        break;
    }
  }
  return root.root;
}

const printable = fc.string({ unit: fc.integer({ min: 0x20, max: 0x7e }).map((c) => String.fromCharCode(c)), maxLength: 200 });
const contentType = fc.constantFrom(
  'application/json', 'application/json; charset=utf-8', 'application/json; charset=utf-16', 'application/json; charset=nope',
  'text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data', 'multipart/form-data; boundary=zzz', 'application/xml',
  'application/octet-stream', 'application/problem+json', 'application/graphql', 'application/*', '*/*', 'garbage', '',
);

type AuthChoice = 'right' | 'none' | 'key' | 'session' | 'operator' | 'garbage-bearer' | 'forged-jwt' | 'fake-key' | 'basic' | 'session-cookie-only';
const authChoice = fc.oneof(
  { weight: 20, arbitrary: fc.constant<AuthChoice>('right') },
  { weight: 1, arbitrary: fc.constantFrom<AuthChoice>('none', 'key', 'session', 'operator', 'garbage-bearer', 'forged-jwt', 'fake-key', 'basic', 'session-cookie-only') },
);

type ParamChoice = 'real' | 'uuid' | 'garbage' | 'encoded-garbage';
const paramChoice = fc.constantFrom<ParamChoice>('real', 'real', 'real', 'real', 'real', 'real', 'uuid', 'garbage', 'encoded-garbage');

type BodyChoice = 'valid' | 'mutated' | 'json-anything' | 'malformed' | 'wrong-type' | 'oversized' | 'bytes' | 'empty';
const bodyChoice = fc.oneof(
  { weight: 2, arbitrary: fc.constant<BodyChoice>('valid') },
  { weight: 6, arbitrary: fc.constant<BodyChoice>('mutated') },
  { weight: 2, arbitrary: fc.constant<BodyChoice>('json-anything') },
  { weight: 2, arbitrary: fc.constant<BodyChoice>('malformed') },
  { weight: 1, arbitrary: fc.constant<BodyChoice>('wrong-type') },
  { weight: 1, arbitrary: fc.constant<BodyChoice>('oversized') },
  { weight: 1, arbitrary: fc.constant<BodyChoice>('bytes') },
  { weight: 1, arbitrary: fc.constant<BodyChoice>('empty') },
);

const MALFORMED_JSON = ['{', '{"density":[NaN]}', '{"density":[Infinity],"temperature":[1]}', "{'a':1}", '[1,2,', '{"a":1}}', '\u0000', 'null', '1', '"x"', '{"__proto__":{"polluted":1}}', '{"a":' + '['.repeat(5000) + ']'.repeat(5000) + '}', '\uFEFF{"a":1}', '{"density":[1e999]}'];

const GRAPHQL_QUERIES = [
  'query($input: EvaluateInput!) { evaluate(input: $input) { meta { points } status warningFlags } }',
  'query { me { id email } }',
  'query { organisations { id name } }',
  'query($id: ID!) { usage(organisationId: $id) { from to } }',
  'query($id: ID!) { mixtures(organisationId: $id) { id name } }',
  'query($id: ID!) { jobs(organisationId: $id) { id state } }',
  'mutation($id: ID!, $plan: String!) { changePlan(organisationId: $id, plan: $plan) { __typename } }',
  'mutation($id: ID!, $input: MixtureInput!) { createMixture(organisationId: $id, input: $input) { id } }',
  'query { operatorHealth { __typename } }',
  'query { __schema { queryType { name } } }',
  '{ a: plans { id } b: plans { id } c: plans { id } }',
  'query { ' + 'organisations { id '.repeat(40) + '}'.repeat(41),
  'subscription { x }',
  '{',
  'query Q { me { id } } query Q { me { id } }',
  'query { me { ...F } } fragment F on User { ...F }',
  // one request asking for many evaluations, and a fragment "bomb": refused by gateway/graphql/limits.ts
  'query($input: EvaluateInput!) { ' + Array.from({ length: 200 }, (_, i) => `e${i}: evaluate(input: $input) { status }`).join(' ') + ' }',
  'query { ...F0 } ' + Array.from({ length: 8 }, (_, i) => `fragment F${i} on Query { ${i === 7 ? 'plans { id }' : `...F${i + 1} `.repeat(8)} }`).join(' '),
];

export interface FuzzRequest {
  route: number;
  method: string;
  auth: AuthChoice;
  params: ParamChoice[];
  garbageParam: string;
  query: Array<[string, string]>;
  headers: Array<[string, string]>;
  contentType: string | null;
  body: BodyChoice;
  mutations: Mutation[];
  anything: unknown;
  text: string;
  oversize: number;
  bytes: Uint8Array;
  graphql: { query: number; rawQuery: string; variables: unknown; batch: boolean };
  multipart: { file: 'csv' | 'csv-garbage' | 'binary-as-csv' | 'fake-hdf5' | 'empty' | 'none' | 'two-files'; fields: Array<[string, string]> };
  webhook: { signature: 'none' | 'garbage' | 'old-format' };
}

export const fuzzRequest: fc.Arbitrary<FuzzRequest> = fc.record({
  route: fc.nat({ max: FUZZ_ROUTES.length - 1 }),
  method: fc.oneof({ weight: 12, arbitrary: fc.constant('') }, { weight: 1, arbitrary: fc.constantFrom('GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'OPTIONS') }),
  auth: authChoice,
  params: fc.array(paramChoice, { minLength: 3, maxLength: 3 }),
  garbageParam: fc.oneof(nastyString, printable, fc.string({ minLength: 500, maxLength: 3000 })),
  query: fc.array(fc.tuple(fc.oneof(nastyString, fc.constantFrom('inputs', 'fields', 'mixture', 'abar', 'limit', 'format', 'organisationId', 'from', 'to', 'granularity', 'groupBy', 'all', 'method')), fc.oneof(nastyString, printable)), { maxLength: 4 }),
  headers: fc.array(
    fc.tuple(
      fc.constantFrom('idempotency-key', 'fermiwell-organisation', 'x-forwarded-for', 'accept', 'content-encoding', 'fermiwell-csrf', 'origin', 'apollo-require-preflight', 'range', 'if-none-match', 'x-http-method-override', 'accept-encoding'),
      fc.oneof(printable, fc.constantFrom('gzip', 'br', 'deflate', 'identity', 'bogus', '1', 'not-an-ip', '::1', '999.1.1.1', 'https://evil.example', 'bytes=0-1', 'DELETE', '')),
    ),
    { maxLength: 3 },
  ),
  contentType: fc.oneof({ weight: 6, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: contentType }),
  body: bodyChoice,
  mutations: fc.array(mutation, { minLength: 1, maxLength: 4 }),
  anything: fc.jsonValue({ maxDepth: 4 }),
  text: fc.oneof(fc.constantFrom(...MALFORMED_JSON), fc.string({ maxLength: 200 }), fc.string({ unit: 'binary', maxLength: 200 })),
  oversize: fc.constantFrom(17 * 1024, 70 * 1024, 600 * 1024, 2 * 1024 * 1024 + 3),
  bytes: fc.uint8Array({ maxLength: 512 }),
  graphql: fc.record({ query: fc.nat(), rawQuery: fc.oneof(nastyString, fc.string({ maxLength: 120 })), variables: fc.oneof(fc.constant(undefined), fc.jsonValue({ maxDepth: 3 }), fc.constant({ id: '' })), batch: fc.boolean() }),
  multipart: fc.record({
    file: fc.constantFrom('csv', 'csv', 'csv-garbage', 'binary-as-csv', 'fake-hdf5', 'empty', 'none', 'two-files'),
    fields: fc.array(fc.tuple(fc.oneof(fc.constantFrom('name', 'composition', 'method', 'components', 'fields', 'soundSpeed', 'organisationId'), nastyString), fc.oneof(nastyString, printable, fc.constantFrom('{"abar":12,"zbar":6}', '{"mixture":"he4"}', '[', '["pressure"]', 'exact', 'table'))), { maxLength: 4 }),
  }),
  webhook: fc.record({ signature: fc.constantFrom('none', 'garbage', 'old-format') }),
});

/**
 * The warm-up: every route once per kind of body (valid, mutated, malformed, random bytes,
 * oversized), with the route's own credential and real path parameters; every kind of upload; every
 * GraphQL query of the list, valid and mutated. It builds what the gateway builds once, on first use,
 * and then keeps at a bounded size: request validators compiled per route, the GraphQL document
 * cache, h5wasm (loaded by the first HDF5 upload: ~70 MB of module source, source map and wasm
 * memory), JIT code. Other fields come from a seeded sample, so the warm-up is the same every run.
 */
export function warmUpRequests(seed: number): FuzzRequest[] {
  const base = fc.sample(fuzzRequest, { seed, numRuns: 1 })[0]!;
  const plain = (route: number, body: BodyChoice, i: number): FuzzRequest => ({
    ...base,
    route, method: '', auth: 'right', params: ['real', 'real', 'real'], query: [], headers: [], contentType: null, body,
    oversize: 70 * 1024, graphql: { ...base.graphql, query: i, batch: false },
  });
  const out: FuzzRequest[] = [];
  FUZZ_ROUTES.forEach((route, r) => {
    for (const body of ['valid', 'mutated', 'malformed', 'bytes', 'oversized'] as const) out.push(plain(r, body, 0));
    if (route.body === 'multipart') {
      for (const file of ['csv', 'csv-garbage', 'binary-as-csv', 'fake-hdf5', 'empty', 'none', 'two-files'] as const) out.push({ ...plain(r, 'valid', 0), multipart: { file, fields: [] } });
    }
    if (route.body === 'graphql') GRAPHQL_QUERIES.forEach((_q, i) => out.push(plain(r, 'valid', i), plain(r, 'mutated', i)));
  });
  return out;
}

// ── building one HTTP request ────────────────────────────────────────────────────────────────

interface BuiltRequest {
  method: string;
  url: string;
  headers: Record<string, string>;
  body?: RequestBody;
  describe: string;
  graphql: boolean;
  credentialSent: boolean;
}

function forgedJwt(userId: string): string {
  const part = (o: unknown) => Buffer.from(JSON.stringify(o)).toString('base64url');
  return `${part({ alg: 'none', typ: 'JWT' })}.${part({ sub: userId, sid: randomUUID(), iss: 'fermiwell', aud: 'fermiwell-dashboard' })}.`;
}

function paramValue(name: string, choice: ParamChoice, garbage: string, c: FuzzCredentials, route: FuzzRoute): string {
  if (choice === 'uuid') return randomUUID();
  if (choice === 'garbage') return garbage.replace(/[/?#]/g, '_') || '_';
  if (choice === 'encoded-garbage') return encodeURIComponent(garbage) || '%20';
  switch (name) {
    case 'orgId':
      // the run's own organisation is never deleted; an unknown one is
      return route.destructive ? randomUUID() : c.organisationId;
    case 'userId':
      return route.destructive ? c.operator.userId : c.session.userId;
    case 'keyId':
      return c.decoyKeyId;
    case 'id':
      return route.path.startsWith('/v1/mixtures') && c.mixtureId ? c.mixtureId : randomUUID();
    default:
      return randomUUID();
  }
}

function buildBody(route: FuzzRoute, r: FuzzRequest): { body?: RequestBody; contentType?: string; describe: string } {
  switch (r.body) {
    case 'empty':
      return { describe: 'no body' };
    case 'malformed':
      return { body: r.text, contentType: 'application/json', describe: `malformed ${JSON.stringify(r.text.slice(0, 60))}` };
    case 'wrong-type':
      return { body: r.text, contentType: 'text/plain', describe: 'text/plain body' };
    case 'oversized':
      return { body: '{"a":"' + 'x'.repeat(r.oversize) + '"}', contentType: 'application/json', describe: `oversized ${r.oversize} B` };
    case 'bytes':
      return { body: Buffer.from(r.bytes), contentType: 'application/octet-stream', describe: `${r.bytes.length} random bytes` };
    case 'json-anything':
      return { body: JSON.stringify(r.anything) ?? 'null', contentType: 'application/json', describe: 'arbitrary JSON' };
    case 'valid':
    case 'mutated': {
      const template = route.template ?? {};
      const value = r.body === 'valid' ? template : mutate(template, r.mutations);
      return { body: JSON.stringify(value) ?? 'null', contentType: 'application/json', describe: `${r.body} ${JSON.stringify(value)?.slice(0, 160)}` };
    }
  }
}

const CSV_OK = 'density,temperature\n1e6,1e7\n2e6,3e7\n';

function multipartBody(r: FuzzRequest): { body: FormData; describe: string } {
  const form = new FormData();
  const m = r.multipart;
  const file = (bytes: Uint8Array | string, type: string, name: string) => form.append('file', new Blob([bytes], { type }), name);
  switch (m.file) {
    case 'csv':
      file(CSV_OK, 'text/csv', 'states.csv');
      break;
    case 'csv-garbage':
      file(`density,temperature\n${r.text}\n${r.garbageParam}\n`, 'text/csv', 'states.csv');
      break;
    case 'binary-as-csv':
      file(r.bytes, 'text/csv', 'states.csv');
      break;
    case 'fake-hdf5':
      file(Buffer.concat([Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.from(r.bytes)]), 'application/x-hdf5', 'states.h5');
      break;
    case 'empty':
      file('', 'text/csv', 'empty.csv');
      break;
    case 'two-files':
      file(CSV_OK, 'text/csv', 'a.csv');
      file(CSV_OK, 'text/csv', 'b.csv');
      break;
    case 'none':
      break;
  }
  for (const [k, v] of m.fields) form.append(k, v);
  return { body: form, describe: `multipart file=${m.file} fields=${JSON.stringify(m.fields).slice(0, 120)}` };
}

export function buildRequest(baseUrl: string, r: FuzzRequest, c: FuzzCredentials): BuiltRequest {
  const entry = FUZZ_ROUTES[r.route]!;
  const method = r.method || entry.method;
  // another method on the same path may be a destructive route (DELETE /v1/organisations/:orgId
  // reached from PATCH's entry; it deleted the run's own organisation, and its key with it, midway
  // through the soak): then it never targets the run's own organisation or session either
  const route: FuzzRoute = { ...entry, destructive: entry.destructive || FUZZ_ROUTES.some((o) => o.destructive && o.path === entry.path && o.method === method) };
  let i = 0;
  const path = route.path.replace(/:([A-Za-z]+)/g, (_m, name: string) => paramValue(name, r.params[i++ % 3]!, r.garbageParam, c, route));
  const headers: Record<string, string> = { 'x-forwarded-for': `198.${18 + (r.route % 2)}.${r.bytes[0] ?? 1}.${1 + ((r.bytes[1] ?? 0) % 254)}` };

  // credentials: the one the route is for, most of the time
  let auth = r.auth;
  if (auth === 'right') {
    auth = route.audience === 'key' ? 'key' : route.audience === 'operator' ? 'operator' : route.audience === 'session' ? 'session' : route.audience === 'key-or-session' ? ((r.bytes.length % 2 ? 'key' : 'session') as AuthChoice) : 'none';
  }
  const destructiveSession = route.destructive && route.path === '/v1/auth/session';
  let credentialSent = true;
  switch (auth) {
    case 'key':
      headers['authorization'] = `Bearer ${c.apiKey}`;
      break;
    case 'session':
      // signing out ends the run's session: only an unknown token goes there
      headers['authorization'] = `Bearer ${destructiveSession ? forgedJwt(c.session.userId) : c.session.accessToken}`;
      headers['fermiwell-organisation'] = c.organisationId;
      break;
    case 'operator':
      headers['authorization'] = `Bearer ${c.operator.accessToken}`;
      break;
    case 'garbage-bearer':
      headers['authorization'] = `Bearer ${r.garbageParam.replace(/[^\x21-\x7e]/g, '') || 'x'}`;
      break;
    case 'forged-jwt':
      headers['authorization'] = `Bearer ${forgedJwt(c.session.userId)}`;
      break;
    case 'fake-key':
      headers['authorization'] = `Bearer fwk_${randomUUID().replace(/-/g, '')}`;
      break;
    case 'basic':
      headers['authorization'] = `Basic ${Buffer.from('user:pass').toString('base64')}`;
      break;
    case 'session-cookie-only':
      credentialSent = !destructiveSession;
      break;
    default:
      credentialSent = false;
  }
  // the refresh cookie only where it acts (refresh) and never to sign-out
  if (route.path === '/v1/auth/session/refresh' && auth !== 'none') headers['cookie'] = `fermiwell_refresh=${c.session.refreshCookie}`;
  else if (auth === 'session-cookie-only' && !destructiveSession) headers['cookie'] = `fermiwell_refresh=${encodeURIComponent(r.garbageParam.slice(0, 100))}`;

  for (const [k, v] of r.headers) {
    if (k === 'fermiwell-organisation' && v === '') continue;
    headers[k] = v;
  }

  let body: RequestBody | undefined;
  let describe: string;
  let type: string | undefined;
  let graphql = false;
  if (route.body === 'multipart' && method === 'POST' && r.body !== 'malformed' && r.body !== 'bytes') {
    ({ body, describe } = multipartBody(r));
  } else if (route.body === 'graphql') {
    graphql = true;
    const query = r.body === 'mutated' || r.body === 'valid' ? GRAPHQL_QUERIES[r.graphql.query % GRAPHQL_QUERIES.length]! : r.graphql.rawQuery;
    const variables = r.body === 'valid' ? { input: EOS_EVALUATE, id: c.organisationId, plan: 'group' } : r.graphql.variables;
    const payload = r.body === 'valid' || r.body === 'mutated' || r.body === 'json-anything' ? { query, ...(variables === undefined ? {} : { variables }) } : undefined;
    if (payload) {
      const value = r.body === 'json-anything' ? mutate(payload, r.mutations) : payload;
      body = JSON.stringify(r.graphql.batch && r.body === 'json-anything' ? [value, value] : value);
      type = 'application/json';
      describe = `graphql ${String(body).slice(0, 200)}`;
    } else ({ body, contentType: type, describe } = buildBody(route, r));
  } else if (route.body === 'webhook') {
    const event = r.body === 'valid' || r.body === 'mutated' ? JSON.stringify(mutate({ id: 'evt_fuzz', type: 'invoice.paid', data: { object: { id: 'in_fuzz' } } }, r.mutations)) : (buildBody(route, r).body as string | undefined);
    body = event;
    type = 'application/json';
    if (r.webhook.signature === 'garbage') headers['stripe-signature'] = r.garbageParam.replace(/[^\x20-\x7e]/g, '');
    if (r.webhook.signature === 'old-format') headers['stripe-signature'] = `t=1,v1=${'0'.repeat(64)}`;
    describe = `webhook sig=${r.webhook.signature} ${String(event).slice(0, 100)}`;
  } else if (route.body === 'eos' && r.body === 'bytes') {
    // the binary form: columns named in the query
    const n = Math.floor(r.bytes.length / 16) * 16;
    body = Buffer.from(r.bytes.subarray(0, n));
    type = 'application/octet-stream';
    describe = `binary ${n} B`;
  } else if (route.body === 'none' && (r.body === 'valid' || r.body === 'mutated')) {
    describe = 'no body';
  } else {
    ({ body, contentType: type, describe } = buildBody(route, r));
  }
  if (method === 'GET' || method === 'OPTIONS') body = undefined;
  if (body !== undefined && !(body instanceof FormData)) headers['content-type'] = r.contentType ?? type ?? 'application/json';
  if (body instanceof FormData && r.contentType) describe += ` (content-type ${r.contentType} ignored for multipart)`;

  const known = route.query ?? [];
  const query = new URLSearchParams();
  for (const [k, v] of r.query) query.append(known.length && k.length % 3 === 0 ? known[k.length % known.length]! : k, v);
  if (route.body === 'eos' && type === 'application/octet-stream' && !query.has('inputs')) query.set('inputs', 'density,temperature');
  const qs = query.toString().slice(0, 6000);
  return { method, url: `${baseUrl}${path}${qs ? `?${qs}` : ''}`, headers, body, describe: `${auth} ${describe}`, graphql, credentialSent };
}

// ── checking one answer ──────────────────────────────────────────────────────────────────────

function isProblem(status: number, contentType: string, body: unknown): boolean {
  if (!/^application\/problem\+json/.test(contentType)) return false;
  const p = body as Record<string, unknown> | null;
  return !!p && typeof p['type'] === 'string' && typeof p['title'] === 'string' && p['title'] !== '' && typeof p['detail'] === 'string' && p['detail'] !== '' && p['status'] === status;
}

/** Returns the finding kind, or null when the answer keeps the contract. */
export function checkAnswer(built: Pick<BuiltRequest, 'graphql'>, status: number, contentType: string, text: string): FuzzFinding['kind'] | null {
  if (status >= 500) return 'server-error';
  let body: unknown = text;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    // not JSON
  }
  if (built.graphql) {
    const errors = (body as { errors?: unknown } | null)?.errors;
    if (Array.isArray(errors)) {
      // a resolver that failed on our side answers 200 with code "internal": that is a 5xx in GraphQL clothes
      if (errors.some((e) => ['internal', 'INTERNAL_SERVER_ERROR'].includes(String((e as { extensions?: { code?: unknown } })?.extensions?.code)))) return 'server-error';
      return errors.every((e) => typeof (e as { extensions?: { code?: unknown } })?.extensions?.code === 'string') ? null : 'graphql-error-without-code';
    }
    if (status >= 400) return isProblem(status, contentType, body) ? null : 'not-problem-json';
    return null;
  }
  if (status >= 400 && !isProblem(status, contentType, body)) return 'not-problem-json';
  return null;
}

function keepRefreshedSession(c: FuzzCredentials, headers: Headers, text: string) {
  const cookie = headers.getSetCookie().map((l) => /^fermiwell_refresh=([^;]+)/.exec(l)?.[1]).find(Boolean);
  let accessToken: unknown;
  try {
    accessToken = (JSON.parse(text) as { accessToken?: unknown }).accessToken;
  } catch {
    return;
  }
  if (cookie && typeof accessToken === 'string') c.session = { ...c.session, accessToken, refreshCookie: decodeURIComponent(cookie) };
}

// ── the run ──────────────────────────────────────────────────────────────────────────────────

/** A GC function when the runtime allows one (node --expose-gc, or switched on here). */
export function gcFunction(): (() => void) | undefined {
  const existing = (globalThis as { gc?: () => void }).gc;
  if (existing) return existing;
  try {
    v8.setFlagsFromString('--expose-gc');
    return vm.runInNewContext('gc') as () => void;
  } catch {
    return undefined;
  }
}

function heapAfterGc(gc: (() => void) | undefined): number {
  if (gc) {
    gc();
    gc();
  }
  return process.memoryUsage().heapUsed;
}

/** Heap after GC once the last answers' short-lived state (1 s rate-limit windows, the meter's 1 s flush) is gone. */
async function settledHeap(gc: (() => void) | undefined): Promise<number> {
  await new Promise((resolve) => setTimeout(resolve, 1_500));
  return heapAfterGc(gc);
}

export async function fuzzRoutes(options: FuzzOptions): Promise<FuzzFigures> {
  const { baseUrl, seed, requests, credentials } = options;
  const batchSize = options.batchSize ?? 100;
  const concurrency = options.concurrency ?? 4;
  const log = options.log ?? (() => undefined);
  const gc = gcFunction();
  let started = performance.now();
  const figures: FuzzFigures = {
    seed, requests: 0, byStatus: {}, byRoute: {}, msByRoute: {}, unauthorizedByRoute: {}, unauthorizedByKind: {}, serverErrors: 0, findings: [], healthChecks: 0, healthFailures: 0,
    authenticatedAnswers: 0, warmUpRequests: 0, heapBeforeBytes: await settledHeap(gc), heapWarmBytes: 0, heapAfterBytes: 0, heapSeries: [], heapPeakBytes: 0,
    gcForced: !!gc, durationMs: 0,
  };

  const one = async (r: FuzzRequest, warmUp = false) => {
    const built = buildRequest(baseUrl, r, credentials);
    const routeName = `${FUZZ_ROUTES[r.route]!.method} ${FUZZ_ROUTES[r.route]!.path}`;
    const finding = (kind: FuzzFinding['kind'], status: number, answer: string) =>
      figures.findings.push({ kind, method: built.method, url: built.url.slice(0, 300), status, request: `${warmUp ? '(warm-up) ' : ''}${built.describe.slice(0, 400)}`, answer });
    // the warm-up's answers are checked like any other, but not counted in the run's figures
    if (warmUp) figures.warmUpRequests++;
    else figures.byRoute[routeName] = (figures.byRoute[routeName] ?? 0) + 1;
    let status = 0;
    let contentType = '';
    let text = '';
    const t0 = performance.now();
    try {
      const res = await fetch(built.url, { method: built.method, headers: built.headers, body: built.body, redirect: 'manual', signal: AbortSignal.timeout(60_000) });
      status = res.status;
      contentType = res.headers.get('content-type') ?? '';
      text = await res.text();
      // a successful refresh rotated the run's refresh token: keep the new one (reusing the old one
      // would end the session, and the rest of the batch would stop at 401)
      if (status === 200 && new URL(built.url).pathname === '/v1/auth/session/refresh') keepRefreshedSession(credentials, res.headers, text);
    } catch (error) {
      // the gateway may close the connection on a body it refuses early (e.g. 413): that is not a crash
      if (!warmUp) {
        figures.byStatus['closed'] = (figures.byStatus['closed'] ?? 0) + 1;
        figures.requests++;
      }
      if (!/other side closed|ECONNRESET|EPIPE|socket/i.test(String((error as Error).cause ?? error))) finding('transport', 0, String((error as Error).cause ?? error));
      return;
    }
    if (!warmUp) {
      figures.msByRoute[routeName] = (figures.msByRoute[routeName] ?? 0) + (performance.now() - t0);
      figures.requests++;
      figures.byStatus[String(status)] = (figures.byStatus[String(status)] ?? 0) + 1;
      if (built.credentialSent && status !== 401 && status !== 403) figures.authenticatedAnswers++;
      if (status === 401) {
        figures.unauthorizedByRoute[routeName] = (figures.unauthorizedByRoute[routeName] ?? 0) + 1;
        const kind = `${r.auth === 'right' ? 'right credential' : r.auth}: ${/"type":"[^"]*\/([^"/]+)"/.exec(text)?.[1] ?? '?'}`;
        figures.unauthorizedByKind[kind] = (figures.unauthorizedByKind[kind] ?? 0) + 1;
      }
    }
    const kind = checkAnswer(built, status, contentType, text);
    if (kind === 'server-error') figures.serverErrors++;
    if (kind) finding(kind, status, `${contentType} ${text.slice(0, 400)}`);
  };

  // the batch's requests (up to a few MB of sampled bodies) go out of scope before the heap is read
  const runAll = async (items: FuzzRequest[], warmUp = false) => {
    let next = 0;
    await Promise.all(
      Array.from({ length: concurrency }, async () => {
        while (next < items.length) await one(items[next++]!, warmUp);
      }),
    );
  };

  if (options.warmUp ?? true) {
    await runAll(warmUpRequests(seed), true);
    await credentials.renew?.('session');
    await credentials.renew?.('operator');
    log(`fuzz: warm-up of ${figures.warmUpRequests} requests done`);
  }
  figures.heapWarmBytes = await settledHeap(gc);
  started = performance.now();

  for (let batch = 0; figures.requests < requests; batch++) {
    const size = Math.min(batchSize, requests - figures.requests);
    await runAll(fc.sample(fuzzRequest, { seed: seed + batch, numRuns: size }));
    // the process stays up
    figures.healthChecks++;
    const health = await fetch(`${baseUrl}/healthz`).then((r) => r.status, () => 0);
    if (health !== 200) figures.healthFailures++;
    // the fuzz may sign the run's own session out (refresh-token reuse ends the family): renew it
    await credentials.renew?.('session');
    await credentials.renew?.('operator');
    figures.heapSeries.push(heapAfterGc(gc));
    if ((batch + 1) % 10 === 0) log(`fuzz: ${figures.requests}/${requests} requests, ${figures.serverErrors} 5xx, ${figures.findings.length} findings`);
  }
  figures.heapPeakBytes = Math.max(figures.heapWarmBytes, ...figures.heapSeries);
  figures.heapAfterBytes = await settledHeap(gc);
  figures.durationMs = performance.now() - started;
  return figures;
}

function quarters(series: number[]): Array<[number, number]> {
  const n = series.length;
  const at = [...new Set([0, Math.floor(n / 4), Math.floor(n / 2), Math.floor((3 * n) / 4), n - 1])].filter((i) => i >= 0 && i < n);
  return at.map((i) => [i, series[i]!]);
}

/** Whether the heap ended within `marginBytes` of its post-warm-up baseline, as one printed line. */
export function heapVerdict(f: FuzzFigures, marginBytes: number): { held: boolean; line: string } {
  const grown = f.heapAfterBytes - f.heapWarmBytes;
  const held = f.gcForced && grown < marginBytes;
  const mb = (b: number) => `${(b / 1024 / 1024).toFixed(1)} MB`;
  return { held, line: `  heap at the end against the baseline: ${grown < 0 ? '−' : '+'}${mb(Math.abs(grown))}, margin ${mb(marginBytes)}: ${held ? 'held' : f.gcForced ? 'MISSED' : 'not measured (no forced GC)'}` };
}

/** The figures as printed by the test and `npm run soak`. */
export function formatFigures(f: FuzzFigures): string {
  const mb = (b: number) => `${(b / 1024 / 1024).toFixed(1)} MB`;
  const sign = (b: number) => `${b < 0 ? '−' : '+'}${mb(Math.abs(b))}`;
  const statuses = Object.entries(f.byStatus).sort(([a], [b]) => a.localeCompare(b)).map(([s, n]) => `${s}×${n}`).join(' ');
  return [
    `fuzz seed ${f.seed}: ${f.requests} requests over ${Object.keys(f.byRoute).length} routes in ${(f.durationMs / 1000).toFixed(1)} s`,
    `  statuses: ${statuses}`,
    `  5xx: ${f.serverErrors}; contract findings: ${f.findings.length}; past authentication: ${f.authenticatedAnswers}`,
    `  /healthz after each batch: ${f.healthChecks - f.healthFailures}/${f.healthChecks} ok`,
    `  slowest routes (total ms): ${Object.entries(f.msByRoute).sort(([, a], [, b]) => b - a).slice(0, 5).map(([r, ms]) => `${r} ${ms.toFixed(0)}`).join('; ')}`,
    `  most 401s: ${Object.entries(f.unauthorizedByRoute).sort(([, a], [, b]) => b - a).slice(0, 4).map(([r, n]) => `${r} ${n}`).join('; ')}`,
    `  401s by credential and kind: ${Object.entries(f.unauthorizedByKind).sort(([, a], [, b]) => b - a).slice(0, 6).map(([k, n]) => `${k} ${n}`).join('; ')}`,
    `  heap used${f.gcForced ? ' after a forced GC' : ' (no GC available: not forced)'}: ${mb(f.heapBeforeBytes)} before any request; baseline ${mb(f.heapWarmBytes)} after the warm-up (${f.warmUpRequests} requests); peak ${mb(f.heapPeakBytes)}; end ${mb(f.heapAfterBytes)} (${sign(f.heapAfterBytes - f.heapWarmBytes)} against the baseline)`,
    `  heap after batches ${quarters(f.heapSeries).map(([i, b]) => `${i + 1}: ${mb(b)}`).join(', ')}`,
  ].join('\n');
}
