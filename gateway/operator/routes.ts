/**
 * REST routes of the Operator page (schema/openapi-operator.yaml), operator role only:
 *   GET /v1/operator/organisations               every organisation, plan, limits, usage this period
 *   GET /v1/operator/organisations/{id}          one of them
 *   PUT /v1/operator/organisations/{id}/limits   move to a plan and/or override limits (audited)
 *   GET /v1/operator/health                      /readyz checks and this instance's key metrics
 * Thin: validate with zod, call OperatorService, shape the answer.
 */
import express, { Router } from 'express';
import { z } from 'zod';
import type { Services } from '../services.js';
import { parse } from '../shared/validate.js';
import { requireSession, sessionOf } from '../auth/session.js';
import type { LimitsChange, OperatorService } from './service.js';

const count = z.number({ error: 'must be a whole number or null' }).int('must be a whole number').nullable();

export const limitsChange = z
  .object({
    plan: z.string().min(1).max(40).optional(),
    overrides: z
      .object({
        pointsPerMonth: count,
        requestsPerSecond: count,
        maxBatch: count,
        tableBuildsPerMonth: z.union([z.number().int('must be a whole number'), z.literal('unlimited'), z.null()], { error: 'must be a whole number, "unlimited" or null' }),
      })
      .strict()
      .optional(),
    reason: z.string({ error: 'is required: say why the limits change' }).max(500, 'must be at most 500 characters'),
  })
  .strict()
  .refine((v) => v.plan !== undefined || v.overrides !== undefined, { message: 'give a plan, overrides, or both', path: ['plan'] });

export function operatorRoutes(services: Services, operator: OperatorService): Router {
  const router = Router();
  const session = requireSession(services.auth, services.access);
  router.use('/v1/operator', express.json({ limit: '16kb' }));
  const actor = (req: express.Request, res: express.Response) => ({ ...sessionOf(res).actor, ip: req.ip ?? null });

  router.get('/v1/operator/organisations', session, async (req, res) => {
    parse(z.object({}).strict(), req.query, 'query');
    res.set('Cache-Control', 'private, no-store').json(await operator.organisations(actor(req, res)));
  });

  router.get('/v1/operator/organisations/:orgId', session, async (req, res) => {
    res.set('Cache-Control', 'private, no-store').json(await operator.organisation(actor(req, res), req.params['orgId'] as string));
  });

  router.put('/v1/operator/organisations/:orgId/limits', session, async (req, res) => {
    const body = parse(limitsChange, req.body) as LimitsChange;
    res.json(await operator.setLimits(actor(req, res), req.params['orgId'] as string, body));
  });

  router.get('/v1/operator/health', session, async (req, res) => {
    res.set('Cache-Control', 'private, no-store').json(await operator.health(actor(req, res)));
  });

  return router;
}
