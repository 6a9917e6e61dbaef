/**
 * REST routes of accounts and sessions (contract: gateway/auth/README.md). Thin: validate with
 * zod, call AuthService, shape the answer, set or clear the refresh cookie.
 */
import express, { Router } from 'express';
import { z } from 'zod';
import type { Services } from '../services.js';
import { parse } from '../shared/validate.js';
import { PASSWORD_MAX, PASSWORD_MIN } from './passwords.js';
import type { IssuedSession } from './service.js';
import { clearRefreshCookie, clientOf, csrfGuard, readRefreshCookie, requireSession, sessionOf, setRefreshCookie } from './session.js';
import { ProblemError } from '../shared/problem.js';
import { sessionFromRequest } from './session.js';

export const email = z.email({ error: 'must be an e-mail address' }).max(254);
export const password = z
  .string({ error: 'is required' })
  .min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`)
  .max(PASSWORD_MAX, `must be at most ${PASSWORD_MAX} characters`);
export const displayName = z.string().trim().min(1, 'must not be empty').max(100, 'must be at most 100 characters');
const token = z.string().min(10, 'is not a token from one of our links').max(200);

export function sessionBody(issued: IssuedSession) {
  return { accessToken: issued.accessToken, tokenType: 'Bearer', expiresIn: issued.expiresIn, user: issued.user };
}

export function authRoutes(services: Services): Router {
  const { auth, access, authLimits: limits, config } = services;
  const router = Router();
  router.use('/v1/auth', express.json({ limit: '16kb' }));
  router.use('/v1/me', express.json({ limit: '16kb' }));
  const session = requireSession(auth, access);

  router.post('/v1/auth/sign-up', limits.signUpPerIp, async (req, res) => {
    const body = parse(z.object({ email, password, displayName }), req.body);
    await auth.signUp(body, clientOf(req));
    res.status(202).json({ status: 'verification-sent', detail: 'If the address can be used, a confirmation link is on its way to it.' });
  });

  router.post('/v1/auth/verify-email', async (req, res) => {
    const body = parse(z.object({ token }), req.body);
    const user = await auth.verifyEmail(body.token, clientOf(req));
    res.json({ status: 'verified', user });
  });

  router.post('/v1/auth/verify-email/resend', limits.mailPerIp, limits.mailPerAddress, async (req, res) => {
    const body = parse(z.object({ email }), req.body);
    await auth.resendVerification(body.email);
    res.status(202).json({ status: 'verification-sent', detail: 'If the address has an unconfirmed account, a new link is on its way to it.' });
  });

  // sign-in: failures are limited per client IP and per address
  router.post('/v1/auth/session', limits.signInPerIp, limits.signInPerAccount, async (req, res) => {
    const body = parse(z.object({ email: z.string().max(254), password: z.string().max(PASSWORD_MAX) }), req.body);
    const issued = await auth.signIn(body, clientOf(req));
    setRefreshCookie(res, config, issued);
    res.json(sessionBody(issued));
  });

  router.post('/v1/auth/session/refresh', csrfGuard, async (req, res) => {
    const refreshToken = readRefreshCookie(req);
    if (!refreshToken) throw new ProblemError('session-required', 401, 'No session', 'There is no session cookie. Sign in with POST /v1/auth/session.');
    try {
      const issued = await auth.refresh(refreshToken, clientOf(req));
      setRefreshCookie(res, config, issued);
      res.json(sessionBody(issued));
    } catch (error) {
      clearRefreshCookie(res, config);
      throw error;
    }
  });

  // sign-out: ends the session named by the access token, or else by the refresh cookie
  router.delete('/v1/auth/session', csrfGuard, async (req, res) => {
    let sessionId: string | null = null;
    try {
      sessionId = (await sessionFromRequest(req, auth)).sessionId;
    } catch {
      // an expired access token must not prevent signing out: the cookie names the session too
    }
    await auth.signOut(sessionId, readRefreshCookie(req), clientOf(req));
    clearRefreshCookie(res, config);
    res.status(204).end();
  });

  router.post('/v1/auth/password/forgot', limits.mailPerIp, limits.mailPerAddress, async (req, res) => {
    const body = parse(z.object({ email }), req.body);
    await auth.requestPasswordReset(body.email, clientOf(req));
    res.status(202).json({ status: 'reset-sent', detail: 'If the address has an account, a link to choose a new password is on its way to it.' });
  });

  router.post('/v1/auth/password/reset', async (req, res) => {
    const body = parse(z.object({ token, password }), req.body);
    await auth.resetPassword(body.token, body.password, clientOf(req));
    clearRefreshCookie(res, config);
    res.status(204).end();
  });

  router.post('/v1/auth/password/change', session, async (req, res) => {
    const body = parse(z.object({ currentPassword: z.string().max(PASSWORD_MAX), newPassword: password }), req.body);
    await auth.changePassword(sessionOf(res), body.currentPassword, body.newPassword);
    res.status(204).end();
  });

  router.get('/v1/me', session, async (_req, res) => {
    const s = sessionOf(res);
    res.json({ ...(await services.organisations.me(s.actor)), currentOrganisation: s.organisation ?? null });
  });

  router.patch('/v1/me', session, async (req, res) => {
    const body = parse(z.object({ displayName: displayName.optional() }).strict(), req.body);
    const user = await auth.updateProfile(sessionOf(res), body);
    res.json(user);
  });

  return router;
}
