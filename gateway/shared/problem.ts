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

/** The last middleware: known problems as they are, body-parser errors as 4xx, the rest as 500. */
export const problemHandler: ErrorRequestHandler = (err, req, res, next) => {
  if (res.headersSent) return next(err);
  if (err instanceof ProblemError) return sendProblem(res, { ...err.problem, instance: req.originalUrl });
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
