/**
 * Request validation with zod for routes that are not (yet) covered by the OpenAPI validator:
 * a failed parse becomes a 400 problem listing every field that is wrong and why.
 */
import type { z } from 'zod';
import { ProblemError } from './problem.js';

export function parse<S extends z.ZodType>(schema: S, value: unknown, where: 'body' | 'query' | 'path' = 'body'): z.infer<S> {
  const result = schema.safeParse(value ?? (where === 'body' ? undefined : {}));
  if (result.success) return result.data;
  const errors = result.error.issues.map((issue) => ({ field: issue.path.join('.') || '(' + where + ')', message: issue.message }));
  const first = errors[0]!;
  const detail =
    value === undefined && where === 'body'
      ? 'The request needs a JSON body (Content-Type: application/json).'
      : `${first.field}: ${first.message}${errors.length > 1 ? ` (and ${errors.length - 1} more, see errors)` : ''}`;
  throw new ProblemError('invalid-request', 400, 'Invalid request', detail, { errors });
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
export const isUuid = (value: unknown): value is string => typeof value === 'string' && UUID.test(value);
