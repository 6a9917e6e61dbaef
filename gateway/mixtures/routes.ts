/**
 * /v1/mixtures: saved compositions (gateway/mixtures/service.ts).
 * - GET (list, one): a signed-in member naming the organisation (?organisationId= or the
 *   Fermiwell-Organisation header), or an API key with `eos:evaluate` (its own organisation), since
 *   codes send `{ "mixture": "<id>" }` and may want to see what it holds;
 * - POST, PUT /{id}, DELETE /{id}: a signed-in member with mixtures.manage (maintainer, owner).
 *   POST accepts Idempotency-Key.
 */
import express, { Router, type Request, type RequestHandler, type Response } from 'express';
import type { Services } from '../services.js';
import { apiKeyChain } from '../keys/auth.js';
import type { ApiKeyContext } from '../keys/types.js';
import { bearerToken, ORGANISATION_HEADER, requireSession, sessionOf } from '../auth/session.js';
import { organisationNotFound, type Actor } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import { idempotency } from '../shared/idempotency.js';
import type { MixtureService } from './service.js';

export const MIXTURES_PATH = '/v1/mixtures';

function askedOrganisation(req: Request): string | undefined {
  const fromQuery = typeof req.query['organisationId'] === 'string' ? req.query['organisationId'] : undefined;
  return fromQuery ?? req.get(ORGANISATION_HEADER) ?? undefined;
}

function organisationMissing(): ProblemError {
  return new ProblemError('invalid-request', 400, 'Organisation missing', 'Name the organisation with ?organisationId=<id> or the Fermiwell-Organisation header.', {
    errors: [{ field: 'organisationId', message: 'required with a signed-in session' }],
  });
}

export function mixtureRoutes(services: Services, mixtures: MixtureService): Router {
  const router = Router();
  const session = requireSession(services.auth, services.access);
  const keyChain = apiKeyChain(services.keys, 'eos:evaluate', services.rateLimit.middleware);
  /** An API key (authenticate, scope, per-key rate limit) or a signed-in session. */
  const keyOrSession: RequestHandler = (req, res, next) => (bearerToken(req)?.startsWith('fwk_') ? keyChain : session)(req, res, next);
  const actor = (req: Request, res: Response): Actor => ({ ...sessionOf(res).actor, ip: req.ip ?? null });
  const organisationFor = (req: Request): string => {
    const asked = askedOrganisation(req);
    if (!asked) throw organisationMissing();
    return asked;
  };
  /** Reads: the key's own organisation, or the session's named one after the role check. */
  const read = async <T>(req: Request, res: Response, byKey: (orgId: string) => Promise<T>, bySession: (a: Actor, orgId: string) => Promise<T>): Promise<T> => {
    const key = res.locals['apiKey'] as ApiKeyContext | undefined;
    if (key) {
      const asked = askedOrganisation(req);
      if (asked !== undefined && asked !== key.organisationId) throw organisationNotFound(asked);
      return byKey(key.organisationId);
    }
    return bySession(actor(req, res), organisationFor(req));
  };
  const noCache: RequestHandler = (_req, res, next) => {
    res.set('Cache-Control', 'private, no-store');
    next();
  };

  router.use(MIXTURES_PATH, express.json({ limit: '64kb' }), noCache);

  router.get(MIXTURES_PATH, keyOrSession, async (req, res) => {
    const items = await read(req, res, (org) => mixtures.listFor(org), (a, org) => mixtures.list(a, org));
    res.json({ items });
  });

  router.post(MIXTURES_PATH, session, idempotency(services.db), async (req, res) => {
    const orgId = organisationFor(req);
    const created = await mixtures.create(actor(req, res), orgId, req.body);
    res.status(201).location(`${MIXTURES_PATH}/${created.id}`).json(created);
  });

  router.get(`${MIXTURES_PATH}/:id`, keyOrSession, async (req, res) => {
    const id = req.params['id'] as string;
    res.json(await read(req, res, (org) => mixtures.getFor(org, id), (a, org) => mixtures.get(a, org, id)));
  });

  router.put(`${MIXTURES_PATH}/:id`, session, async (req, res) => {
    res.json(await mixtures.update(actor(req, res), organisationFor(req), req.params['id'] as string, req.body));
  });

  router.delete(`${MIXTURES_PATH}/:id`, session, async (req, res) => {
    await mixtures.remove(actor(req, res), organisationFor(req), req.params['id'] as string);
    res.status(204).end();
  });

  return router;
}
