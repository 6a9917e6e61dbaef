import { HttpErrorResponse, HttpInterceptorFn, HttpRequest } from '@angular/common/http';
import { inject } from '@angular/core';
import { from, switchMap, throwError, catchError } from 'rxjs';

import { AuthSession } from './auth-session';
import { SKIP_SESSION_RETRY } from './session-context';

/** Same-origin REST calls of the Fermiwell API. */
function isApiCall(url: string): boolean {
  return url.startsWith('/v1/');
}

/**
 * Auth routes that are the session themselves get no organisation header, and only sign-out and
 * change-password (which act on the current session) get the access token.
 */
function decorate(req: HttpRequest<unknown>, token: string | null, organisationId: string | null): HttpRequest<unknown> {
  const authRoute = req.url.startsWith('/v1/auth/');
  const wantsToken =
    !authRoute ||
    (req.method === 'DELETE' && req.url === '/v1/auth/session') ||
    req.url === '/v1/auth/password/change';
  const setHeaders: Record<string, string> = {};
  if (token && wantsToken) setHeaders['Authorization'] = `Bearer ${token}`;
  if (organisationId && !authRoute) setHeaders['Fermiwell-Organisation'] = organisationId;
  return req.clone({ setHeaders });
}

/**
 * Requests that already carry an Authorization header pass through untouched.
 * Adds `Authorization: Bearer <access token>` and `Fermiwell-Organisation` to /v1 calls. On a 401
 * it refreshes the session once (concurrent 401s share that refresh) and retries the request once
 * with the new token; when the refresh is refused the session is over: sign out, go to sign-in.
 */
export const sessionInterceptor: HttpInterceptorFn = (req, next) => {
  if (!isApiCall(req.url)) return next(req);
  // A request that brings its own credentials (the Probe's API key for /v1/eos/*) is sent as it is:
  // no session token over it, no organisation header, no session refresh on its 401.
  if (req.headers.has('Authorization')) return next(req);
  const session = inject(AuthSession);
  const tokenUsed = session.accessToken();

  return next(decorate(req, tokenUsed, session.organisationId())).pipe(
    catchError((error: unknown) => {
      if (!(error instanceof HttpErrorResponse) || error.status !== 401 || req.context.get(SKIP_SESSION_RETRY)) {
        return throwError(() => error);
      }
      // Another request may already have refreshed while this one was on its way.
      const current = session.accessToken();
      const fresh = current && current !== tokenUsed ? Promise.resolve(current) : session.refreshAccessToken();
      return from(fresh).pipe(
        switchMap((token) => {
          if (!token) {
            session.endSession();
            return throwError(() => error);
          }
          const retry = req.clone({ context: req.context.set(SKIP_SESSION_RETRY, true) });
          return next(decorate(retry, token, session.organisationId())).pipe(
            catchError((retryError: unknown) => {
              if (retryError instanceof HttpErrorResponse && retryError.status === 401) session.endSession();
              return throwError(() => retryError);
            }),
          );
        }),
      );
    }),
  );
};
