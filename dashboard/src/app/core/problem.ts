import { HttpErrorResponse } from '@angular/common/http';

/** An RFC 9457 problem as the gateway sends it (application/problem+json). */
export interface Problem {
  /** `/problems/<kind>`: stable, switch on it. */
  readonly type: string;
  readonly title: string;
  readonly status: number;
  /** Written for people: show it. */
  readonly detail?: string;
  readonly errors?: readonly { readonly field: string; readonly message: string }[];
  readonly [extension: string]: unknown;
}

/** The `<kind>` of `/problems/<kind>`, or '' when the error was not a problem. */
export function problemKind(error: unknown): string {
  const problem = asProblem(error);
  return problem ? problem.type.replace(/^.*\/problems\//, '') : '';
}

/** The problem inside an HttpErrorResponse, or null (network failure, non-problem answer). */
export function asProblem(error: unknown): Problem | null {
  const body = error instanceof HttpErrorResponse ? error.error : error;
  if (body && typeof body === 'object' && typeof (body as Problem).type === 'string' && typeof (body as Problem).status === 'number') {
    return body as Problem;
  }
  return null;
}

/** A sentence for a person: the problem's detail, else its title, else what we can tell. */
export function problemMessage(error: unknown, fallback = 'Something went wrong. Please try again.'): string {
  const problem = asProblem(error);
  if (problem) {
    if (problem.errors?.length && !problem.detail) return problem.errors.map((e) => e.message).join(' ');
    return problem.detail ?? problem.title ?? fallback;
  }
  if (error instanceof HttpErrorResponse) {
    if (error.status === 0) return 'The Fermiwell service could not be reached. Check your connection and try again.';
    if (error.status >= 500) return 'The Fermiwell service had a problem. Please try again in a moment.';
  }
  return fallback;
}

/** Validation messages per form field (`invalid-request` problems), keyed by field name. */
export function fieldErrors(error: unknown): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of asProblem(error)?.errors ?? []) {
    const field = e.field.replace(/^body\./, '').replace(/^\//, '');
    out[field] = out[field] ? `${out[field]} ${e.message}` : e.message;
  }
  return out;
}
