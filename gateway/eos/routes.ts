/**
 * REST routes of the EOS feature: POST /v1/eos/{evaluate,invert,regime} in columnar JSON and in
 * the binary form. Thin: authenticate, check scope, rate limit, read the body within the plan's
 * size limit, validate against the OpenAPI document (contractCheck below), then call the
 * EOS service and write its answer. Every request refused after authentication is recorded as a
 * rejected request in usage exactly once; admitted requests are recorded by their meter ticket.
 */
import express, { Router, type ErrorRequestHandler, type RequestHandler, type Response } from 'express';
import * as OpenApiValidator from 'express-openapi-validator';
import type { Services } from '../services.js';
import { apiKeyChain, apiKeyOf } from '../keys/auth.js';
import type { ApiKeyContext } from '../keys/types.js';
import { ProblemError } from '../shared/problem.js';
import { chain } from '../shared/chain.js';
import { apiSecurityHeaders } from '../shared/api-headers.js';
import { openApiDocument } from '../docs/document.js';
import { asciiJson, decodeColumns, encodeColumns, layoutHeader, LAYOUT_HEADER, META_HEADER } from './binary.js';
import type { BatchAnswer, BinaryQuery, EosService, MeterMark, Operation } from './service.js';
import { renderJson, sendJson } from './json-answer.js';
import { LazySignal } from './pool.js';
import { JsonBodyValidator } from './json-body-validator.js';

/** JSON bodies: 96 bytes per point of the plan's largest batch (four full-precision columns) + 64 KiB. */
export const JSON_BYTES_PER_POINT = 96;
export const JSON_BYTES_OVERHEAD = 64 * 1024;
/** Kept below V8's longest string (~512 MiB): JSON bodies are decoded to one string. */
export const JSON_BYTES_CAP = 480 * 1024 * 1024;
/** Binary bodies: up to 8 float64 columns per point of the plan's largest batch. */
export const BINARY_BYTES_PER_POINT = 64;

export function jsonBodyLimit(maxBatch: number): number {
  return Math.min(JSON_BYTES_CAP, maxBatch * JSON_BYTES_PER_POINT + JSON_BYTES_OVERHEAD);
}

export function binaryBodyLimit(maxBatch: number): number {
  return maxBatch * BINARY_BYTES_PER_POINT;
}

/** The operations by path (the API contract documents exactly these; tests/gateway/openapi.test.ts). */
export const EOS_OPERATIONS: Readonly<Record<string, Operation>> = { '/v1/eos/evaluate': 'evaluate', '/v1/eos/invert': 'invert', '/v1/eos/regime': 'regime' };

interface RequestState {
  endpoint: string;
  mark: MeterMark;
  startedAt: number;
  /** The running batch's stop (set by the handler). */
  abort?: LazySignal;
}

/**
 * The EOS API as one middleware for every path under /v1/eos: the steps before an operation, then
 * the operation (POST; other methods 405; other paths fall through to the 404). Plain calls
 * (shared/chain.ts) rather than an Express router with a layer per step and per route: on the
 * single-point hot path the router's own bookkeeping cost more than most of the steps.
 */
export function eosRoutes(services: Services, eos: EosService): RequestHandler {
  const handlers = new Map(Object.entries(EOS_OPERATIONS).map(([path, op]) => [path, handler(op, eos)] as const));
  const dispatch: RequestHandler = (req, res, next) => {
    const run = handlers.get(req.path);
    if (run === undefined) next();
    else if (req.method === 'POST') void run(req, res, next);
    else {
      res.setHeader('Allow', 'POST');
      next(new ProblemError('method-not-allowed', 405, 'Method not allowed', `${req.method} is not allowed on ${req.path}; use POST.`));
    }
  };
  // security headers → track → key → scope → rate limit → body → contract → operation
  const steps = chain([apiSecurityHeaders(), track(services), apiKeyChain(services.keys, 'eos:evaluate', services.rateLimit.middleware), planBodyParsers(), contractCheck(openApiDocument()), dispatch]);
  return (req, res, next) => {
    const url = req.url;
    if (!(url.startsWith('/v1/eos/') || url === '/v1/eos' || url.startsWith('/v1/eos?'))) return next();
    steps(req, res, (error?: unknown) => (error === undefined ? next() : asProblem(error, req, res, next)));
  };
}

/**
 * Per request: the usage record of a request refused after authentication (bad body, scope, rate
 * limit, …; one record each) and the batch stopped when the client goes away — both on the
 * response's 'close', which follows the answer's end or a lost connection.
 */
function track(services: Services): RequestHandler {
  return (req, res, next) => {
    const op = req.method === 'POST' ? EOS_OPERATIONS[req.path] : undefined;
    const state: RequestState = { endpoint: `/v1/eos/${op ?? 'unknown'}`, mark: { recorded: false }, startedAt: performance.now() };
    res.locals['eos'] = state;
    if (op) {
      // the metrics route label, also for requests refused before the route matched
      res.locals['route'] = state.endpoint;
      res.once('close', () => {
        if (!res.writableFinished) state.abort?.abort();
        const key = res.locals['apiKey'] as ApiKeyContext | undefined;
        if (!key || state.mark.recorded || res.statusCode < 400) return;
        state.mark.recorded = true;
        services.meter.recordRejected(key, state.endpoint, performance.now() - state.startedAt);
      });
    }
    next();
  };
}

/**
 * Requests checked against the API contract: JSON bodies of the three operations by their
 * compiled body schemas (json-body-validator.ts; a few µs), everything else — the binary form and
 * its query parameters, other media types, other methods — by express-openapi-validator.
 */
function contractCheck(document: Record<string, any>): RequestHandler {
  const bodies = new JsonBodyValidator(document, Object.keys(EOS_OPERATIONS));
  const middleware = Router();
  middleware.use(
    OpenApiValidator.middleware({
      apiSpec: eosPathsOnly(document) as never,
      validateRequests: { allowUnknownQueryParameters: false, coerceTypes: false, removeAdditional: false },
      validateResponses: false,
      // authentication is apiKeyAuth's job; the document describes it for clients
      validateSecurity: false,
      validateApiSpec: false,
      ignoreUndocumented: true,
    }),
  );
  return (req, res, next) => {
    const path = req.path;
    // express.json parsed it (objects and arrays only; express.raw gives a Buffer), no query string
    const json = req.method === 'POST' && req.body !== undefined && !Buffer.isBuffer(req.body) && !req.originalUrl.includes('?');
    if (!json || !bodies.has(path)) middleware(req, res, next);
    else next(bodies.check(path, req.body));
  };
}

/** The document with only the /v1/eos paths: fewer routes for the validator to match per request. */
function eosPathsOnly(document: Record<string, any>): Record<string, any> {
  const paths = Object.fromEntries(Object.entries(document['paths'] ?? {}).filter(([p]) => p.startsWith('/v1/eos/')));
  return { ...document, paths };
}

/** express.json / express.raw sized for the key's plan (runs after authentication). */
function planBodyParsers(): RequestHandler {
  const byBatch = new Map<number, [RequestHandler, RequestHandler]>();
  return (req, res, next) => {
    const key = apiKeyOf(res);
    let parsers = byBatch.get(key.limits.maxBatch);
    if (!parsers) {
      parsers = [
        express.json({ limit: jsonBodyLimit(key.limits.maxBatch) }),
        express.raw({ type: 'application/octet-stream', limit: binaryBodyLimit(key.limits.maxBatch) }),
      ];
      byBatch.set(key.limits.maxBatch, parsers);
    }
    const [json, raw] = parsers;
    json(req, res, (error?: unknown) => {
      if (error) return next(tooLarge(error, key, 'JSON'));
      // parsed as JSON: nothing left for the binary parser to read
      if (req.body !== undefined) return next();
      raw(req, res, (error2?: unknown) => next(error2 ? tooLarge(error2, key, 'binary') : undefined));
    });
  };
}

function tooLarge(error: unknown, key: ApiKeyContext, form: 'JSON' | 'binary'): unknown {
  if ((error as { type?: string }).type !== 'entity.too.large') return error;
  const limit = form === 'JSON' ? jsonBodyLimit(key.limits.maxBatch) : binaryBodyLimit(key.limits.maxBatch);
  return new ProblemError(
    'body-too-large',
    413,
    'Request body too large',
    `The ${form} body is larger than ${limit} bytes, the limit on the ${key.limits.plan} plan (largest batch ${key.limits.maxBatch} points). ${form === 'JSON' ? 'Send large batches in the binary form, or split the batch.' : 'Split the batch.'}`,
    { limitBytes: limit },
  );
}

function handler(op: Operation, eos: EosService): RequestHandler {
  return async (req, res, next) => {
    const key = apiKeyOf(res);
    const state = res.locals['eos'] as RequestState;
    // express.raw reads only application/octet-stream bodies, into a Buffer
    const binary = Buffer.isBuffer(req.body);
    // the client going away stops the batch (nothing is billed; track() aborts it)
    const abort = new LazySignal();
    state.abort = abort;
    try {
      const answer = await eos.execute(
        key,
        async () => {
          if (!binary) return eos.prepare(op, await eos.withSavedMixture(key.organisationId, jsonBody(req)), key.limits);
          const query = binaryQuery(req.query);
          const columns = decodeColumns(req.body, list(req.query['inputs']) ?? []).columns;
          return eos.prepareBinary(op, query, columns, key.limits, await eos.savedMixture(key.organisationId, query.mixture));
        },
        { endpoint: state.endpoint, encoding: binary ? 'typed' : 'json', signal: abort, mark: state.mark, startedAt: state.startedAt },
      );
      if (binary) sendBinary(res, answer);
      else sendJson(res, renderJson(answer));
    } catch (error) {
      next(error);
    }
  };
}

function jsonBody(req: express.Request) {
  // the raw query string: the validator fills parameter defaults into req.query
  const query = req.originalUrl.indexOf('?');
  if (query < 0) return req.body;
  const extra = [...new Set(new URLSearchParams(req.originalUrl.slice(query + 1)).keys())];
  if (extra.length > 0) {
    throw new ProblemError('invalid-request', 400, 'Invalid request', `Query parameters (${extra.join(', ')}) describe the binary form; with a JSON body, put every option in the body.`);
  }
  return req.body;
}

function list(value: unknown): string[] | undefined {
  if (value === undefined) return undefined;
  if (Array.isArray(value)) return value.map(String);
  return String(value).split(',');
}

function number(value: unknown): number | undefined {
  return value === undefined ? undefined : Number(value);
}

function binaryQuery(q: express.Request['query']): BinaryQuery {
  const inputs = list(q['inputs']);
  if (!inputs) {
    throw new ProblemError('invalid-binary-layout', 400, 'Binary layout missing', 'Name the body columns with ?inputs=, e.g. ?inputs=density,temperature&mixture=c12-o16.');
  }
  const out: BinaryQuery = { inputs };
  const fields = list(q['fields']);
  const components = list(q['components']);
  if (fields) out.fields = fields;
  if (components) out.components = components;
  if (q['method'] !== undefined) out.method = String(q['method']) as BinaryQuery['method'];
  if (q['soundSpeed'] !== undefined) out.soundSpeed = String(q['soundSpeed']) as BinaryQuery['soundSpeed'];
  if (q['mixture'] !== undefined) out.mixture = String(q['mixture']);
  const numbers = { abar: number(q['abar']), zbar: number(q['zbar']), tolerance: number(q['tolerance']), maxEvaluations: number(q['maxEvaluations']) };
  for (const [k, v] of Object.entries(numbers)) if (v !== undefined) (out as unknown as Record<string, number>)[k] = v;
  return out;
}

// ── answers ──────────────────────────────────────────────────────────────────────────────────

function sendBinary(res: Response, answer: BatchAnswer) {
  const refs = answer.binaryColumns ?? [];
  const columns = refs.map(({ ref }) => {
    switch (ref.kind) {
      case 'field':
        return answer.fields[ref.field] as Float64Array;
      case 'component':
        return answer.components?.[ref.component]?.[ref.field] as Float64Array;
      case 'maxwell':
        return answer.maxwellResiduals?.[ref.field] as Float64Array;
      case 'warningFlags':
        return Float64Array.from(answer.warningFlags);
    }
  });
  columns.push(Float64Array.from(answer.status));
  res
    .status(200)
    .set(LAYOUT_HEADER, layoutHeader(answer.n, [...refs.map((r) => r.name), 'status']))
    .set(META_HEADER, asciiJson(answer.meta))
    .type('application/octet-stream')
    .send(encodeColumns(answer.n, columns));
}

// ── errors ───────────────────────────────────────────────────────────────────────────────────

interface ValidatorError {
  status: number;
  message: string;
  errors: Array<{ path: string; message: string }>;
}

function isValidatorError(error: unknown): error is ValidatorError {
  const e = error as Partial<ValidatorError> | undefined;
  return !!e && typeof e.status === 'number' && Array.isArray(e.errors);
}

/** Body-parser and OpenAPI-validator errors as problem+json 4xx (never 5xx). */
const asProblem: ErrorRequestHandler = (error, req, res, next) => {
  if (error instanceof ProblemError) {
    const retry = error.problem['retryAfterSeconds'];
    if (typeof retry === 'number' && !res.headersSent) res.setHeader('Retry-After', String(retry));
    return next(error);
  }
  if ((error as { type?: string })?.type === 'entity.parse.failed') {
    return next(new ProblemError('malformed-body', 400, 'Malformed request body', `The body is not valid JSON: ${(error as Error).message}. Numbers must be finite JSON numbers (NaN and Infinity are not JSON).`));
  }
  if (!isValidatorError(error) || error.status >= 500) return next(error);
  const errors = error.errors.map((e) => ({ path: e.path, message: e.message }));
  switch (error.status) {
    case 415:
      return next(new ProblemError('unsupported-media-type', 415, 'Unsupported media type', `Send Content-Type: application/json (columnar JSON) or application/octet-stream (the binary form); got ${req.headers['content-type'] ?? 'none'}.`));
    case 405:
      return next(new ProblemError('method-not-allowed', 405, 'Method not allowed', `${req.method} is not allowed on ${req.baseUrl}${req.path}; use POST.`));
    case 404:
      return next(new ProblemError('not-found', 404, 'Not found', `No route for ${req.method} ${req.baseUrl}${req.path}. The API reference is at /docs.`));
    case 413:
      return next(new ProblemError('body-too-large', 413, 'Request body too large', error.message));
    default:
      return next(
        new ProblemError('invalid-request', 400, 'Invalid request', `The request does not match the API contract: ${errors.map((e) => `${e.path}: ${e.message}`).join('; ')}. See /docs.`, { errors }),
      );
  }
};
