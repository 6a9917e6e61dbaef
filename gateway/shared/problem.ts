/**
 * RFC 9457 "Problem Details for HTTP APIs": every error the gateway returns is an
 * application/problem+json body with a stable `type` URI per kind of error.
 */
import type { ErrorRequestHandler, RequestHandler, Response } from 'express';

/** Relative type URIs resolve against the gateway itself (RFC 9457 §3.1.1 allows relative references). */
export const PROBLEM_BASE = '/problems/';

export interface Problem {
  type: string;
  title: string;
  status: number;
  detail?: string;
  instance?: string;
  [extension: string]: unknown;
}

/** An error that carries its problem; thrown by services and routes, rendered by the handler. */
export class ProblemError extends Error {
  readonly problem: Problem;
  constructor(kind: string, status: number, title: string, detail?: string, extensions: Record<string, unknown> = {}) {
    super(detail ?? title);
    this.problem = { type: PROBLEM_BASE + kind, title, status, ...(detail ? { detail } : {}), ...extensions };
  }
}

/** Seconds a client is asked to wait (Retry-After) when the database cannot be reached. */
export const DATABASE_RETRY_AFTER_SECONDS = 5;

// Node socket codes of a refused connection (the gateway's only other outgoing calls, the payment
// provider and SMTP, map their own errors) and PostgreSQL SQLSTATEs meaning "the database is not
// reachable right now": class 08 (connection exception), 57P01–57P03 (admin shutdown, crash
// shutdown, cannot connect now), 53300 (too many connections) — PostgreSQL manual, Appendix A.
const UNREACHABLE_CODES = new Set(['ECONNREFUSED', 'EHOSTUNREACH', '57P01', '57P02', '57P03', '53300']);
const UNREACHABLE_MESSAGE = /Connection terminated|connection error|Timeout acquiring a connection|timeout exceeded when trying to connect|the database system is (starting up|shutting down)/i;

/**
 * The 503 problem for an error that means the database is unreachable (PostgreSQL restarting,
 * down, or the pool unable to connect); undefined for any other error. Looks through `cause` and
 * AggregateError members, where pg and knex put the socket error.
 */
export function databaseUnavailable(err: unknown, depth = 0): ProblemError | undefined {
  if (!err || typeof err !== 'object' || depth > 4) return undefined;
  const e = err as { code?: unknown; name?: unknown; message?: unknown; cause?: unknown; errors?: unknown };
  const code = typeof e.code === 'string' ? e.code : '';
  const hit = UNREACHABLE_CODES.has(code) || code.startsWith('08') && code.length === 5 || e.name === 'KnexTimeoutError' || (typeof e.message === 'string' && UNREACHABLE_MESSAGE.test(e.message));
  if (hit) {
    return new ProblemError(
      'database-unavailable',
      503,
      'Database unavailable',
      `The service cannot reach its database right now. Nothing was applied or billed; retry after ${DATABASE_RETRY_AFTER_SECONDS} seconds.`,
      { retryAfterSeconds: DATABASE_RETRY_AFTER_SECONDS },
    );
  }
  if (Array.isArray(e.errors)) for (const inner of e.errors) { const p = databaseUnavailable(inner, depth + 1); if (p) return p; }
  return databaseUnavailable(e.cause, depth + 1);
}

export function sendProblem(res: Response, problem: Problem) {
  res.status(problem.status).type('application/problem+json').send(JSON.stringify(problem));
}

export const notFound: RequestHandler = (req, res) => {
  sendProblem(res, {
    type: PROBLEM_BASE + 'not-found',
    title: 'Not found',
    status: 404,
    detail: `No route for ${req.method} ${req.path}. The API reference is at /docs.`,
    instance: req.originalUrl,
  });
};

/** The last middleware: known problems as they are, an unreachable database as 503, body-parser errors as 4xx, the rest as 500. */
export const problemHandler: ErrorRequestHandler = (err, req, res, next) => {
  if (res.headersSent) return next(err);
  if (err instanceof ProblemError) return sendProblem(res, { ...err.problem, instance: req.originalUrl });
  const unavailable = databaseUnavailable(err);
  if (unavailable) {
    req.log?.warn({ err }, 'database unavailable');
    res.setHeader('Retry-After', String(DATABASE_RETRY_AFTER_SECONDS));
    return sendProblem(res, { ...unavailable.problem, instance: req.originalUrl });
  }
  const status = typeof err?.status === 'number' && err.status >= 400 && err.status < 500 ? err.status : 500;
  if (status === 500) {
    req.log?.error({ err }, 'unhandled error');
    return sendProblem(res, {
      type: PROBLEM_BASE + 'internal',
      title: 'Internal error',
      status,
      detail: 'The request failed on our side. It was not applied; retrying is safe.',
      instance: req.originalUrl,
    });
  }
  // body-parser and similar: malformed JSON, body too large, unsupported encoding
  const kind = err?.type === 'entity.too.large' ? 'body-too-large' : err?.type === 'entity.parse.failed' ? 'malformed-body' : 'bad-request';
  sendProblem(res, {
    type: PROBLEM_BASE + kind,
    title: kind === 'body-too-large' ? 'Request body too large' : kind === 'malformed-body' ? 'Malformed request body' : 'Bad request',
    status,
    detail: String(err?.message ?? 'The request could not be read.'),
    instance: req.originalUrl,
  });
};
