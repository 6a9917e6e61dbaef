/**
 * Who calls /v1/jobs and /v1/tables. Two ways in, like GET /v1/usage:
 * - an API key (`Authorization: Bearer fwk_…`) with the `jobs:write` scope acts in its own
 *   organisation (naming another one is 404), rate-limited like the EOS calls;
 * - a signed-in session (the dashboard) names the organisation with the `Fermiwell-Organisation`
 *   header or `?organisationId=`; the role matrix decides (jobs.read / jobs.create / jobs.manage).
 */
import type { Request, RequestHandler, Response } from 'express';
import type { Services } from '../services.js';
import { apiKeyAuth, requireScope } from '../keys/auth.js';
import type { ApiKeyContext } from '../keys/types.js';
import { bearerToken, ORGANISATION_HEADER, sessionFromRequest } from '../auth/session.js';
import { organisationNotFound } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import type { JobCaller } from './service.js';

/** Authenticates (key chain or session) before anything else is read. */
export function jobsAuth(services: Services): RequestHandler {
  const keyChain = [apiKeyAuth(services.keys), requireScope('jobs:write'), services.rateLimit.middleware];
  return (req, res, next) => {
    if (bearerToken(req)?.startsWith('fwk_')) {
      let i = 0;
      const step = (error?: unknown): void => {
        if (error) return next(error);
        const handler = keyChain[i++];
        if (!handler) return next();
        handler(req, res, step as never);
      };
      return step();
    }
    sessionFromRequest(req, services.auth).then((session) => {
      // where shared middleware (Idempotency-Key) looks for the signed-in person
      res.locals['session'] = session;
      next();
    }, next);
  };
}

export async function callerOf(services: Services, req: Request, res: Response, fromBody?: string): Promise<JobCaller> {
  const asked = (typeof req.query['organisationId'] === 'string' ? req.query['organisationId'] : undefined) ?? fromBody ?? req.get(ORGANISATION_HEADER) ?? undefined;
  const key = res.locals['apiKey'] as ApiKeyContext | undefined;
  if (key) {
    if (asked !== undefined && asked !== key.organisationId) throw organisationNotFound(asked);
    return { organisationId: key.organisationId, key };
  }
  const session = await sessionFromRequest(req, services.auth);
  if (!asked) {
    throw new ProblemError('invalid-request', 400, 'Organisation missing', 'Name the organisation with the Fermiwell-Organisation header or ?organisationId=<id>.', {
      errors: [{ path: 'organisationId', message: 'required with a signed-in session' }],
    });
  }
  return { organisationId: asked, actor: { ...session.actor, ip: req.ip ?? null } };
}
