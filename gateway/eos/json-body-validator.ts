/**
 * Validation of the JSON bodies of the EOS operations against the API contract (the OpenAPI
 * document's request-body schemas), compiled once with Ajv for JSON Schema 2020-12 — the dialect of
 * OpenAPI 3.1 and the validator express-openapi-validator itself builds, with its request options
 * (not strict about OpenAPI's own keywords, defaults filled in, first error only).
 *
 * Why not the middleware for these bodies: it looks the route up, copies and rewrites the request's
 * parameters and validates a wrapper object on every request — ~10 % of a single-point request.
 * Binary bodies (their layout is in query parameters) and anything unusual still go through it.
 * Errors have the middleware's shape (status 400, `errors: [{ path: '/body/…', message }]`, enum
 * messages listing the allowed values), so one mapper turns both into the same problem.
 */
import { createRequire } from 'node:module';
import type { ErrorObject, ValidateFunction } from 'ajv';

// ajv is CommonJS; its 2020-12 class is module.exports of ajv/dist/2020
const Ajv2020 = createRequire(import.meta.url)('ajv/dist/2020') as typeof import('ajv/dist/2020.js').default;

const DOCUMENT_ID = 'fermiwell-openapi.json';

export interface BodyValidationError {
  status: 400;
  message: string;
  errors: Array<{ path: string; message: string }>;
}

/** JSON-pointer escaping (RFC 6901): ~ → ~0, / → ~1. */
const pointer = (segment: string) => segment.replaceAll('~', '~0').replaceAll('/', '~1');

export class JsonBodyValidator {
  private readonly validators = new Map<string, ValidateFunction>();

  /**
   * `document`: the OpenAPI document (not modified); `paths`: the operations (POST, body
   * application/json) whose bodies to validate.
   */
  constructor(document: Record<string, any>, paths: readonly string[]) {
    const ajv = new Ajv2020({ strict: false, useDefaults: true, allErrors: false, coerceTypes: false });
    ajv.addSchema({ ...structuredClone(document), $id: DOCUMENT_ID });
    for (const path of paths) {
      const schema = document['paths']?.[path]?.['post']?.['requestBody']?.['content']?.['application/json']?.['schema'];
      if (!schema) throw new Error(`the API contract has no JSON body for POST ${path}`);
      const ref = `${DOCUMENT_ID}#/paths/${pointer(path)}/post/requestBody/content/${pointer('application/json')}/schema`;
      this.validators.set(path, ajv.compile({ $ref: ref }));
    }
  }

  has(path: string): boolean {
    return this.validators.has(path);
  }

  /** The error (middleware shape) when the body does not match, else undefined; fills in defaults. */
  check(path: string, body: unknown): BodyValidationError | undefined {
    const validate = this.validators.get(path);
    if (!validate) throw new Error(`no body validator for ${path}`);
    if (validate(body)) return undefined;
    const errors = (validate.errors ?? []).map(toEntry);
    return { status: 400, message: errors.map((e) => `${e.path} ${e.message}`).join(', '), errors };
  }
}

function toEntry(e: ErrorObject): { path: string; message: string } {
  const params = e.params as { missingProperty?: string; additionalProperty?: string; unevaluatedProperty?: string; allowedValues?: unknown[] };
  const named = params.missingProperty ?? params.additionalProperty ?? params.unevaluatedProperty;
  const path = '/body' + e.instancePath + (named !== undefined ? '/' + named : '');
  const message = e.keyword === 'enum' && params.allowedValues ? `${e.message}: ${params.allowedValues.join(', ')}` : (e.message ?? 'is invalid');
  return { path, message };
}
