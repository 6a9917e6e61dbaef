/**
 * How a browser session travels:
 * - the access token (JWT, ~15 min) in `Authorization: Bearer <token>`, kept in memory by the
 *   dashboard — never in a cookie, so cross-site requests cannot carry it;
 * - the refresh token in the `fermiwell_refresh` cookie: HttpOnly, SameSite=Strict, Path
 *   /v1/auth/session (sent only to refresh and sign-out), Secure unless PUBLIC_URL is plain http on
 *   a loopback address. Routes that act on that cookie also demand a JSON content type or the
 *   `Fermiwell-CSRF` header (csrfGuard), which a cross-site form cannot send.
 *
 * requireSession sets res.locals.session (the user and the session id) and, when the request
 * carries `Fermiwell-Organisation: <id>`, the organisation the dashboard is working in and the
 * caller's role there (404 if the caller is not a member and not an operator).
 */
import type { Request, RequestHandler, Response } from 'express';
import type { Config } from '../config.js';
import type { AccessService } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import type { OrganisationRole } from '../shared/roles.js';
import type { AuthenticatedSession, AuthService, IssuedSession } from './service.js';

export const REFRESH_COOKIE = 'fermiwell_refresh';
export const REFRESH_COOKIE_PATH = '/v1/auth/session';
export const ORGANISATION_HEADER = 'fermiwell-organisation';
export const CSRF_HEADER = 'fermiwell-csrf';

export interface RequestSession extends AuthenticatedSession {
  /** From the Fermiwell-Organisation header, when sent. */
  organisation?: { id: string; role: OrganisationRole | null };
}

function isLoopbackHost(hostname: string): boolean {
  return hostname === 'localhost' || hostname === '[::1]' || hostname === '::1' || /^127\.\d+\.\d+\.\d+$/.test(hostname);
}

export function cookieIsSecure(config: Config): boolean {
  const url = new URL(config.PUBLIC_URL);
  return !(url.protocol === 'http:' && isLoopbackHost(url.hostname));
}

export function setRefreshCookie(res: Response, config: Config, issued: Pick<IssuedSession, 'refreshToken' | 'refreshExpiresAt'>) {
  res.cookie(REFRESH_COOKIE, issued.refreshToken, {
    httpOnly: true,
    sameSite: 'strict',
    secure: cookieIsSecure(config),
    path: REFRESH_COOKIE_PATH,
    expires: issued.refreshExpiresAt,
  });
}

export function clearRefreshCookie(res: Response, config: Config) {
  res.clearCookie(REFRESH_COOKIE, { httpOnly: true, sameSite: 'strict', secure: cookieIsSecure(config), path: REFRESH_COOKIE_PATH });
}

export function readRefreshCookie(req: Request): string | null {
  const header = req.headers.cookie;
  if (!header) return null;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq < 0) continue;
    if (part.slice(0, eq).trim() === REFRESH_COOKIE) {
      const value = part.slice(eq + 1).trim();
      try {
        return decodeURIComponent(value) || null;
      } catch {
        return null;
      }
    }
  }
  return null;
}

/** Cookie-authenticated routes: a cross-site form cannot send JSON or a custom header. */
export const csrfGuard: RequestHandler = (req, _res, next) => {
  if (req.is('application/json') || req.get(CSRF_HEADER)) return next();
  next(new ProblemError('csrf-check-failed', 403, 'Request refused', `Send this request with "Content-Type: application/json" or a "Fermiwell-CSRF: 1" header.`));
};

export function bearerToken(req: Request): string | null {
  const match = /^Bearer\s+(\S+)$/i.exec(req.headers.authorization ?? '');
  return match ? match[1]! : null;
}

/** The signed-in session of a request, or a 401 problem. Memoised per request (REST and GraphQL share it). */
export function sessionFromRequest(req: Request, auth: AuthService): Promise<AuthenticatedSession> {
  const cached = memo.get(req);
  if (cached) return cached;
  const promise = (async () => {
    const token = bearerToken(req);
    if (!token) throw new ProblemError('session-required', 401, 'Sign-in required', 'Send the access token from sign-in as "Authorization: Bearer <token>".');
    if (token.startsWith('fwk_')) {
      throw new ProblemError('session-required', 401, 'Sign-in required', 'API keys call the evaluation API; account management needs a signed-in session (POST /v1/auth/session).');
    }
    return auth.authenticate(token, req.ip ?? null);
  })();
  memo.set(req, promise);
  return promise;
}
const memo = new WeakMap<Request, Promise<AuthenticatedSession>>();

export function requireSession(auth: AuthService, access: AccessService): RequestHandler {
  return (req, res, next) => {
    (async () => {
      const session: RequestSession = { ...(await sessionFromRequest(req, auth)) };
      const organisationId = req.get(ORGANISATION_HEADER);
      if (organisationId) {
        const resolved = await access.resolve(session.actor, organisationId);
        session.organisation = { id: resolved.organisation.id, role: resolved.role };
      }
      res.locals['session'] = session;
    })().then(() => next(), next);
  };
}

export function sessionOf(res: Response): RequestSession {
  const session = res.locals['session'] as RequestSession | undefined;
  if (!session) throw new ProblemError('session-required', 401, 'Sign-in required', 'This route needs a signed-in session.');
  return session;
}

export function clientOf(req: Request) {
  return { ip: req.ip ?? null, userAgent: req.get('user-agent') ?? null };
}
