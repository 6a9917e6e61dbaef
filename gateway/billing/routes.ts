/**
 * REST routes of Plan & billing (schema/openapi-billing.yaml), thin over BillingService:
 *   GET  /v1/plans                                         the plans and their limits (public)
 *   GET  /v1/organisations/{orgId}/billing                 plan, subscription, card, plans (members)
 *   PUT  /v1/organisations/{orgId}/billing/plan            change plan (owners)
 *   PUT  /v1/organisations/{orgId}/billing/card            test-mode card entry (owners)
 *   GET  /v1/organisations/{orgId}/billing/invoices[/{id}] invoices (members)
 *   POST /v1/billing/webhooks                              the payment provider's events (signed)
 * The webhook reads the raw body (express.raw) because the signature covers the exact bytes.
 * Card numbers never reach a log: the request logger does not log bodies, and no answer or
 * problem repeats the number.
 */
import express, { Router } from 'express';
import Stripe from 'stripe';
import { z } from 'zod';
import type { Services } from '../services.js';
import { requireSession, sessionOf } from '../auth/session.js';
import { ProblemError } from '../shared/problem.js';
import { parse } from '../shared/validate.js';

export const planChangeBody = z.object({ plan: z.string().trim().min(1, 'must name a plan (free, group or facility)') }).strict();

export const testCardBody = z
  .object({
    number: z.string().trim().regex(/^[\d -]{12,23}$/, 'must be a card number (digits, spaces allowed)'),
    expMonth: z.coerce.number().int().min(1, 'must be 1–12').max(12, 'must be 1–12'),
    expYear: z.coerce.number().int().min(2000, 'must be a four-digit year').max(2100, 'must be a four-digit year'),
    cvc: z.string().trim().regex(/^\d{3,4}$/, 'must be 3 or 4 digits'),
  })
  .strict();

export const WEBHOOK_PATH = '/v1/billing/webhooks';

export function billingRoutes(services: Services): Router {
  const { auth, access, billing, billingWebhooks, config } = services;
  const router = Router();
  const session = requireSession(auth, access);
  const base = '/v1/organisations/:orgId/billing';
  const actor = (req: express.Request, res: express.Response) => ({ ...sessionOf(res).actor, ip: req.ip ?? null });
  const noStore: express.RequestHandler = (_req, res, next) => {
    res.set('Cache-Control', 'private, no-store');
    next();
  };

  // the signature covers the exact bytes: raw body, before any JSON parser sees this path
  router.post(WEBHOOK_PATH, express.raw({ type: () => true, limit: '512kb' }), async (req, res) => {
    const secret = config.STRIPE_WEBHOOK_SECRET;
    const provider = billing.provider;
    if (!secret || !provider) throw new ProblemError('billing-not-configured', 503, 'Webhooks are not configured', 'This instance has no STRIPE_WEBHOOK_SECRET (or no STRIPE_SECRET_KEY); events cannot be verified, so none are accepted.');
    const signature = req.get('stripe-signature');
    if (!signature) throw new ProblemError('invalid-webhook-signature', 400, 'Signature missing', 'Webhook requests must carry the Stripe-Signature header.');
    let event: Stripe.Event;
    try {
      event = provider.constructEvent(Buffer.isBuffer(req.body) ? req.body : Buffer.from(''), signature, secret);
    } catch (error) {
      const detail = error instanceof Stripe.errors.StripeSignatureVerificationError ? error.message : 'The body could not be read as an event.';
      throw new ProblemError('invalid-webhook-signature', 400, 'Signature does not verify', `${detail} Nothing was changed.`);
    }
    res.json({ received: true, ...(await billingWebhooks.handle(event)) });
  });

  router.get('/v1/plans', async (_req, res) => {
    res.set('Cache-Control', 'public, max-age=60');
    res.json({ items: await billing.plans() });
  });

  router.use(base, express.json({ limit: '8kb' }), noStore);

  router.get(base, session, async (req, res) => {
    res.json(await billing.overview(actor(req, res), req.params['orgId'] as string));
  });

  router.put(`${base}/plan`, session, async (req, res) => {
    const body = parse(planChangeBody, req.body);
    res.json(await billing.changePlan(actor(req, res), req.params['orgId'] as string, body.plan));
  });

  router.put(`${base}/card`, session, async (req, res) => {
    const body = parse(testCardBody, req.body);
    res.json({ card: await billing.setTestCard(actor(req, res), req.params['orgId'] as string, body) });
  });

  router.get(`${base}/invoices`, session, async (req, res) => {
    res.json({ items: await billing.invoices(actor(req, res), req.params['orgId'] as string) });
  });

  router.get(`${base}/invoices/:invoiceId`, session, async (req, res) => {
    res.json(await billing.invoice(actor(req, res), req.params['orgId'] as string, req.params['invoiceId'] as string));
  });

  return router;
}
