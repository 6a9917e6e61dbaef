import { HttpClient, HttpContext, HttpHeaders } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable } from 'rxjs';

import type { InvitationPreview, IssuedSession, Me, Organisation, Permissions, User } from './api-types';
import { SKIP_SESSION_RETRY } from './session-context';

/** The header the cookie routes demand as their CSRF guard (gateway/auth/README.md, Sessions). */
export const CSRF_HEADERS = new HttpHeaders({ 'Fermiwell-CSRF': '1' });

/**
 * The account routes of the REST API (gateway/auth/README.md): sign-up, sign-in, verification,
 * passwords, the signed-in person and their organisations. Keys and team routes live in their
 * features (keys/keys-api.ts, team/team-api.ts).
 */
@Injectable({ providedIn: 'root' })
export class ApiClient {
  private readonly http = inject(HttpClient);
  /** Calls that must never trigger the interceptor's refresh-and-retry (they are the session). */
  private readonly noRetry = () => new HttpContext().set(SKIP_SESSION_RETRY, true);

  signUp(body: { email: string; password: string; displayName: string }): Observable<{ status: string; detail?: string }> {
    return this.http.post<{ status: string; detail?: string }>('/v1/auth/sign-up', body, { context: this.noRetry() });
  }

  verifyEmail(token: string): Observable<{ status: 'verified'; user: User }> {
    return this.http.post<{ status: 'verified'; user: User }>('/v1/auth/verify-email', { token }, { context: this.noRetry() });
  }

  resendVerification(email: string): Observable<unknown> {
    return this.http.post('/v1/auth/verify-email/resend', { email }, { context: this.noRetry() });
  }

  signIn(email: string, password: string): Observable<IssuedSession> {
    return this.http.post<IssuedSession>('/v1/auth/session', { email, password }, { context: this.noRetry(), withCredentials: true });
  }

  refresh(): Observable<IssuedSession> {
    return this.http.post<IssuedSession>('/v1/auth/session/refresh', {}, {
      headers: CSRF_HEADERS,
      context: this.noRetry(),
      withCredentials: true,
    });
  }

  signOut(): Observable<unknown> {
    return this.http.delete('/v1/auth/session', { headers: CSRF_HEADERS, context: this.noRetry(), withCredentials: true });
  }

  forgotPassword(email: string): Observable<unknown> {
    return this.http.post('/v1/auth/password/forgot', { email }, { context: this.noRetry() });
  }

  resetPassword(token: string, password: string): Observable<unknown> {
    return this.http.post('/v1/auth/password/reset', { token, password }, { context: this.noRetry() });
  }

  changePassword(currentPassword: string, newPassword: string): Observable<unknown> {
    return this.http.post('/v1/auth/password/change', { currentPassword, newPassword });
  }

  me(): Observable<Me> {
    return this.http.get<Me>('/v1/me');
  }

  organisations(): Observable<{ items: Organisation[] }> {
    return this.http.get<{ items: Organisation[] }>('/v1/organisations');
  }

  createOrganisation(name: string): Observable<Organisation> {
    return this.http.post<Organisation>('/v1/organisations', { name });
  }

  permissions(orgId: string): Observable<Permissions> {
    return this.http.get<Permissions>(`/v1/organisations/${encodeURIComponent(orgId)}/permissions`);
  }

  previewInvitation(token: string): Observable<InvitationPreview> {
    return this.http.post<InvitationPreview>('/v1/invitations/preview', { token }, { context: this.noRetry() });
  }

  acceptInvitation(token: string): Observable<{ organisation: Organisation }> {
    return this.http.post<{ organisation: Organisation }>('/v1/invitations/accept', { token });
  }

  acceptInvitationWithNewAccount(body: { token: string; displayName: string; password: string }): Observable<IssuedSession & { organisation: Organisation }> {
    return this.http.post<IssuedSession & { organisation: Organisation }>('/v1/invitations/accept', body, {
      context: this.noRetry(),
      withCredentials: true,
    });
  }
}
