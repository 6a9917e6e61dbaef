/**
 * REST routes of API-key management for signed-in people (the Keys page), under
 * /v1/organisations/{orgId}/keys. Thin over KeyManagement; the evaluation path authenticates keys
 * through KeyService.authenticate (keys/auth.ts) and is not here.
 */
import express, { Router } from 'express';
import { z } from 'zod';
import type { Services } from '../services.js';
import { parse } from '../shared/validate.js';
import { requireSession, sessionOf } from '../auth/session.js';
import { SCOPES } from './types.js';
import { idempotency } from '../shared/idempotency.js';

export const keyName = z.string().trim().min(1, 'must not be empty').max(80, 'must be at most 80 characters');
export const newKeyBody = z
  .object({
    name: keyName,
    scopes: z.array(z.enum(SCOPES, { error: `must be one of ${SCOPES.join(', ')}` })).min(1, 'needs at least one scope').default(['eos:evaluate']),
    expiresAt: z.iso.datetime({ offset: true, error: 'must be an ISO 8601 date-time' }).nullable().optional(),
  })
  .strict();

export function keyAdminRoutes(services: Services): Router {
  const { auth, access, keyAdmin } = services;
  const router = Router();
  const session = requireSession(auth, access);
  const base = '/v1/organisations/:orgId/keys';
  router.use('/v1/organisations/:orgId/keys', express.json({ limit: '16kb' }));
  const actor = (req: express.Request, res: express.Response) => ({ ...sessionOf(res).actor, ip: req.ip ?? null });
  // a secret in a response must not be kept by any cache on the way
  const noStore: express.RequestHandler = (_req, res, next) => {
    res.set('Cache-Control', 'no-store');
    next();
  };

  router.get(base, session, async (req, res) => {
    res.json({ items: await keyAdmin.list(actor(req, res), req.params['orgId'] as string) });
  });

  router.post(base, session, noStore, idempotency(services.db, { secretBearing: true }), async (req, res) => {
    const body = parse(newKeyBody, req.body);
    const created = await keyAdmin.create(actor(req, res), req.params['orgId'] as string, {
      name: body.name,
      scopes: body.scopes,
      expiresAt: body.expiresAt ? new Date(body.expiresAt) : null,
    });
    res.status(201).location(`/v1/organisations/${req.params['orgId']}/keys/${created.key.id}`).json(created);
  });

  router.get(`${base}/:keyId`, session, async (req, res) => {
    res.json(await keyAdmin.get(actor(req, res), req.params['orgId'] as string, req.params['keyId'] as string));
  });

  router.post(`${base}/:keyId/rotate`, session, noStore, async (req, res) => {
    res.json(await keyAdmin.rotate(actor(req, res), req.params['orgId'] as string, req.params['keyId'] as string));
  });

  router.post(`${base}/:keyId/revoke`, session, async (req, res) => {
    res.json(await keyAdmin.revoke(actor(req, res), req.params['orgId'] as string, req.params['keyId'] as string));
  });

  return router;
}
