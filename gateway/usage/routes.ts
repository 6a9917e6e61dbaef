/**
 * GET /v1/usage: the organisation's usage series and quota (gateway/usage/service.ts), as JSON or,
 * with `?format=csv`, as CSV for the dashboard's export. Two ways in, one answer:
 * - an API key (`Authorization: Bearer fwk_…`) with the `usage:read` scope reads its own
 *   organisation (an `organisationId` naming another one is 404), rate-limited like the EOS calls;
 * - a signed-in session (the dashboard) names the organisation with `?organisationId=` or the
 *   `Fermiwell-Organisation` header and needs `usage.read` in the role matrix (every role has it).
 * Query parameters are validated against schema/openapi.yaml (express-openapi-validator).
 */
import { Router, type ErrorRequestHandler, type RequestHandler } from 'express';
import * as OpenApiValidator from 'express-openapi-validator';
import type { Services } from '../services.js';
import { apiKeyChain } from '../keys/auth.js';
import type { ApiKeyContext } from '../keys/types.js';
import { bearerToken, ORGANISATION_HEADER, sessionFromRequest } from '../auth/session.js';
import { organisationNotFound } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import { openApiDocument } from '../docs/document.js';
import { usageCsv, type UsageQuery, type UsageService } from './service.js';

export const USAGE_PATH = '/v1/usage';

export function usageRoutes(services: Services, usage: UsageService): Router {
  const router = Router();
  const keyChain = apiKeyChain(services.keys, 'usage:read', services.rateLimit.middleware);
  const authenticate: RequestHandler = (req, res, next) => {
    if (bearerToken(req)?.startsWith('fwk_')) {
      keyChain(req, res, next);
      return;
    }
    // a signed-in session (401 without one) before the parameters are looked at
    sessionFromRequest(req, services.auth).then(() => next(), next);
  };

  router.get(
    USAGE_PATH,
    authenticate,
    OpenApiValidator.middleware({
      apiSpec: usagePathsOnly(openApiDocument()) as never,
      validateRequests: { allowUnknownQueryParameters: false, coerceTypes: false, removeAdditional: false },
      validateResponses: false,
      validateSecurity: false,
      validateApiSpec: false,
      ignoreUndocumented: true,
    }) as unknown as RequestHandler[],
    (async (req, res) => {
      const raw = new URLSearchParams(req.originalUrl.split('?')[1] ?? '');
      const query: UsageQuery = {
        from: raw.get('from') ?? undefined,
        to: raw.get('to') ?? undefined,
        granularity: raw.get('granularity') ?? undefined,
        groupBy: raw.get('groupBy') ?? undefined,
      };
      const asked = raw.get('organisationId') ?? req.get(ORGANISATION_HEADER) ?? undefined;
      const key = res.locals['apiKey'] as ApiKeyContext | undefined;
      let organisationId: string;
      if (key) {
        if (asked !== undefined && asked !== key.organisationId) throw organisationNotFound(asked);
        organisationId = key.organisationId;
      } else {
        const session = await sessionFromRequest(req, services.auth); // memoised: resolved in authenticate
        if (!asked) {
          throw new ProblemError('invalid-request', 400, 'Organisation missing', 'Name the organisation with ?organisationId=<id> or the Fermiwell-Organisation header.', {
            errors: [{ path: 'organisationId', message: 'required with a signed-in session' }],
          });
        }
        organisationId = (await services.access.require({ ...session.actor, ip: req.ip ?? null }, asked, 'usage.read')).organisation.id;
      }
      const answer = await usage.read(organisationId, query);
      res.set('Cache-Control', 'private, no-store');
      if (raw.get('format') === 'csv') {
        // the file is named for the days it covers: the range is [from, to), so its last day is the one before `to`
        const lastDay = new Date(Date.parse(answer.to) - 1).toISOString().slice(0, 10);
        res
          .status(200)
          .type('text/csv; charset=utf-8; header=present')
          .set('Content-Disposition', `attachment; filename="usage-${organisationId}-${answer.from.slice(0, 10)}-${lastDay}-${answer.granularity}.csv"`)
          .send(usageCsv(answer));
      } else res.json(answer);
    }) as RequestHandler,
  );
  router.all(USAGE_PATH, (req, res, next) => {
    res.setHeader('Allow', 'GET');
    next(new ProblemError('method-not-allowed', 405, 'Method not allowed', `${req.method} is not allowed on ${USAGE_PATH}; use GET.`));
  });
  router.use(USAGE_PATH, validatorProblem);
  return router;
}

/** The document with only /v1/usage: the validator matches just that path here. */
function usagePathsOnly(document: Record<string, any>): Record<string, any> {
  const paths = Object.fromEntries(Object.entries(document['paths'] ?? {}).filter(([p]) => p === USAGE_PATH));
  return { ...document, paths };
}

/** express-openapi-validator's errors as 400 problem+json naming each parameter. */
const validatorProblem: ErrorRequestHandler = (error, _req, _res, next) => {
  const e = error as { status?: number; errors?: Array<{ path: string; message: string }> };
  if (error instanceof ProblemError || typeof e?.status !== 'number' || !Array.isArray(e.errors) || e.status >= 500) return next(error);
  const errors = e.errors.map((x) => ({ path: x.path, message: x.message }));
  next(new ProblemError('invalid-request', 400, 'Invalid request', `The request does not match the API contract: ${errors.map((x) => `${x.path}: ${x.message}`).join('; ')}. See /docs.`, { errors }));
};
