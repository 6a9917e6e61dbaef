/**
 * REST routes of organisations, members, invitations and the audit log (contract:
 * gateway/auth/README.md). Thin: validate with zod, call OrganisationService, shape the answer.
 */
import express, { Router } from 'express';
import { z } from 'zod';
import type { Services } from '../services.js';
import { parse } from '../shared/validate.js';
import { ORGANISATION_ROLES } from '../shared/roles.js';
import { ProblemError } from '../shared/problem.js';
import { clientOf, requireSession, sessionFromRequest, sessionOf, setRefreshCookie } from '../auth/session.js';
import { idempotency } from '../shared/idempotency.js';
import { displayName, email, password, sessionBody } from '../auth/routes.js';
import { actorOf } from '../auth/service.js';
import { AUDIT_PAGE_MAX } from '../audit/service.js';

export const organisationName = z.string().trim().min(2, 'must be at least 2 characters').max(120, 'must be at most 120 characters');
const role = z.enum(ORGANISATION_ROLES, { error: `must be one of ${ORGANISATION_ROLES.join(', ')}` });
const token = z.string().min(10, 'is not a token from one of our links').max(200);

export const auditQuery = z
  .object({
    action: z.string().max(100).optional(),
    actor: z.uuid({ error: 'must be a user id' }).optional(),
    from: z.iso.datetime({ offset: true, error: 'must be an ISO 8601 date-time' }).optional(),
    to: z.iso.datetime({ offset: true, error: 'must be an ISO 8601 date-time' }).optional(),
    limit: z.coerce.number().int().min(1).max(AUDIT_PAGE_MAX).optional(),
    cursor: z.string().max(200).optional(),
  })
  .strict();

export function organisationRoutes(services: Services): Router {
  const { auth, access, organisations } = services;
  const router = Router();
  const session = requireSession(auth, access);
  router.use(['/v1/organisations', '/v1/invitations'], express.json({ limit: '16kb' }));
  const actor = (req: express.Request, res: express.Response) => ({ ...sessionOf(res).actor, ip: req.ip ?? null });

  router.get('/v1/organisations', session, async (req, res) => {
    const query = parse(z.object({ all: z.enum(['true', 'false']).optional() }).strict(), req.query, 'query');
    const a = actor(req, res);
    res.json({ items: query.all === 'true' ? await organisations.listAll(a) : await organisations.listMine(a) });
  });

  router.post('/v1/organisations', session, idempotency(services.db), async (req, res) => {
    const body = parse(z.object({ name: organisationName }), req.body);
    const created = await organisations.create(actor(req, res), body.name);
    res.status(201).location(`/v1/organisations/${created.id}`).json(created);
  });

  router.get('/v1/organisations/:orgId', session, async (req, res) => {
    res.json(await organisations.get(actor(req, res), req.params['orgId'] as string));
  });

  router.patch('/v1/organisations/:orgId', session, async (req, res) => {
    const body = parse(z.object({ name: organisationName }).strict(), req.body);
    res.json(await organisations.rename(actor(req, res), req.params['orgId'] as string, body.name));
  });

  router.delete('/v1/organisations/:orgId', session, async (req, res) => {
    await organisations.delete(actor(req, res), req.params['orgId'] as string);
    res.status(204).end();
  });

  router.get('/v1/organisations/:orgId/permissions', session, async (req, res) => {
    res.json(await organisations.permissions(actor(req, res), req.params['orgId'] as string));
  });

  router.get('/v1/organisations/:orgId/members', session, async (req, res) => {
    res.json({ items: await organisations.members(actor(req, res), req.params['orgId'] as string) });
  });

  router.patch('/v1/organisations/:orgId/members/:userId', session, async (req, res) => {
    const body = parse(z.object({ role }).strict(), req.body);
    res.json(await organisations.changeRole(actor(req, res), req.params['orgId'] as string, req.params['userId'] as string, body.role));
  });

  router.delete('/v1/organisations/:orgId/members/:userId', session, async (req, res) => {
    await organisations.removeMember(actor(req, res), req.params['orgId'] as string, req.params['userId'] as string);
    res.status(204).end();
  });

  router.get('/v1/organisations/:orgId/invitations', session, async (req, res) => {
    res.json({ items: await organisations.invitations(actor(req, res), req.params['orgId'] as string) });
  });

  router.post('/v1/organisations/:orgId/invitations', session, idempotency(services.db), async (req, res) => {
    const body = parse(z.object({ email, role }).strict(), req.body);
    const invitation = await organisations.invite(actor(req, res), req.params['orgId'] as string, body.email, body.role);
    res.status(201).json(invitation);
  });

  router.delete('/v1/organisations/:orgId/invitations/:invitationId', session, async (req, res) => {
    await organisations.revokeInvitation(actor(req, res), req.params['orgId'] as string, req.params['invitationId'] as string);
    res.status(204).end();
  });

  router.get('/v1/organisations/:orgId/audit-log', session, async (req, res) => {
    const q = parse(auditQuery, req.query, 'query');
    const page = await organisations.auditLog(actor(req, res), req.params['orgId'] as string, {
      action: q.action,
      actorId: q.actor,
      from: q.from ? new Date(q.from) : undefined,
      to: q.to ? new Date(q.to) : undefined,
      limit: q.limit,
      cursor: q.cursor,
    });
    res.json(page);
  });

  // ── invitations by link (the token in the body, never in a URL that ends up in logs) ──

  router.post('/v1/invitations/preview', async (req, res) => {
    const body = parse(z.object({ token }), req.body);
    res.json(await organisations.previewInvitation(body.token));
  });

  /**
   * Signed in (Authorization header): joins with that account. Signed out: creates the account for
   * the invited address with displayName and password, joins, and signs in (201 with a session).
   */
  router.post('/v1/invitations/accept', async (req, res) => {
    const body = parse(z.object({ token, displayName: displayName.optional(), password: password.optional() }), req.body);
    if (req.headers.authorization) {
      const s = await sessionFromRequest(req, auth);
      const result = await organisations.acceptInvitation(body.token, { actor: { ...s.actor, ip: req.ip ?? null } }, req.ip ?? null);
      res.json({ organisation: result.organisation, user: { id: result.user.id, email: result.user.email } });
      return;
    }
    if (!body.displayName || !body.password) {
      throw new ProblemError('invalid-request', 400, 'Invalid request', 'To accept without signing in, send displayName and password for the new account (or sign in first).', {
        errors: [
          ...(body.displayName ? [] : [{ field: 'displayName', message: 'is required when not signed in' }]),
          ...(body.password ? [] : [{ field: 'password', message: 'is required when not signed in' }]),
        ],
      });
    }
    const result = await organisations.acceptInvitation(body.token, { newAccount: { displayName: body.displayName, password: body.password } }, req.ip ?? null);
    const issued = await auth.startSession(result.user, clientOf(req));
    await services.audit.recordQuietly({ action: 'auth.sign-in', actor: actorOf(result.user), target: { type: 'user', id: result.user.id }, details: { viaInvitation: true }, ip: req.ip ?? null });
    setRefreshCookie(res, services.config, issued);
    res.status(201).json({ organisation: result.organisation, ...sessionBody(issued) });
  });

  return router;
}
