import { HttpClient, provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import type { IssuedSession, Organisation, User } from './api-types';
import { AuthSession } from './auth-session';
import { sessionInterceptor } from './session-interceptor';

const user: User = {
  id: 'u-1',
  email: 'ada@tests.example',
  displayName: 'Ada',
  emailVerified: true,
  platformRole: null,
  createdAt: '2026-01-01T00:00:00Z',
};
const issued = (accessToken: string): IssuedSession => ({ accessToken, tokenType: 'Bearer', expiresIn: 900, user });
const organisation: Organisation = {
  id: 'org-1',
  name: 'Supernova group',
  slug: 'supernova-group',
  plan: 'free',
  createdAt: '2026-01-01T00:00:00Z',
  memberCount: 1,
  role: 'owner',
};
const sessionExpired = { type: '/problems/session-expired', title: 'Session expired', status: 401 };

describe('sessionInterceptor', () => {
  let http: HttpClient;
  let backend: HttpTestingController;
  let session: AuthSession;

  /** Signs in through the real service, answering the sign-in and /v1/me calls. */
  async function signIn(token = 'access-1'): Promise<void> {
    const done = session.signIn('ada@tests.example', 'correct horse battery');
    backend.expectOne('/v1/auth/session').flush(issued(token));
    await Promise.resolve();
    await vi.waitFor(() => backend.expectOne('/v1/me').flush({ user, organisations: [organisation], currentOrganisation: { id: 'org-1', role: 'owner' } }));
    await done;
  }

  beforeEach(() => {
    localStorage.clear();
    localStorage.setItem('fermiwell.organisation', 'org-1');
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        provideHttpClient(withInterceptors([sessionInterceptor])),
        provideHttpClientTesting(),
      ],
    });
    http = TestBed.inject(HttpClient);
    backend = TestBed.inject(HttpTestingController);
    session = TestBed.inject(AuthSession);
  });

  afterEach(() => backend.verify());

  it('sends the access token and the organisation header on /v1 calls, not elsewhere', async () => {
    await signIn();
    void firstValueFrom(http.get('/v1/organisations/org-1/keys'));
    const api = backend.expectOne('/v1/organisations/org-1/keys');
    expect(api.request.headers.get('Authorization')).toBe('Bearer access-1');
    expect(api.request.headers.get('Fermiwell-Organisation')).toBe('org-1');
    api.flush({ items: [] });

    void firstValueFrom(http.get('/assets/whatever.json'));
    const other = backend.expectOne('/assets/whatever.json');
    expect(other.request.headers.has('Authorization')).toBe(false);
    other.flush({});
  });

  it('on a 401 refreshes once (CSRF guard included) and retries with the new token', async () => {
    await signIn('old-token');
    const answer = firstValueFrom(http.get<{ items: unknown[] }>('/v1/organisations/org-1/keys'));

    backend.expectOne('/v1/organisations/org-1/keys').flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });
    const refresh = await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'));
    expect(refresh.request.method).toBe('POST');
    expect(refresh.request.body).toEqual({});
    expect(refresh.request.headers.get('Fermiwell-CSRF')).toBe('1');
    expect(refresh.request.withCredentials).toBe(true);
    expect(refresh.request.headers.has('Authorization')).toBe(false);
    refresh.flush(issued('new-token'));

    const retry = await vi.waitFor(() => backend.expectOne('/v1/organisations/org-1/keys'));
    expect(retry.request.headers.get('Authorization')).toBe('Bearer new-token');
    retry.flush({ items: [1] });
    await expect(answer).resolves.toEqual({ items: [1] });
    expect(session.accessToken()).toBe('new-token');
  });

  it('shares one refresh between concurrent 401s', async () => {
    await signIn('old-token');
    const a = firstValueFrom(http.get('/v1/a'));
    const b = firstValueFrom(http.get('/v1/b'));
    backend.expectOne('/v1/a').flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });
    backend.expectOne('/v1/b').flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });

    const refreshes = await vi.waitFor(() => {
      const found = backend.match('/v1/auth/session/refresh');
      expect(found.length).toBeGreaterThan(0);
      return found;
    });
    expect(refreshes).toHaveLength(1);
    refreshes[0]!.flush(issued('new-token'));

    await vi.waitFor(() => backend.expectOne('/v1/a').flush('A'));
    await vi.waitFor(() => backend.expectOne('/v1/b').flush('B'));
    expect(await Promise.all([a, b])).toEqual(['A', 'B']);
    backend.expectNone('/v1/auth/session/refresh');
  });

  it('does not retry twice: a second 401 ends the session', async () => {
    await signIn('old-token');
    const router = TestBed.inject(Router);
    const navigate = vi.spyOn(router, 'navigate').mockResolvedValue(true);
    const answer = firstValueFrom(http.get('/v1/me'));
    backend.expectOne('/v1/me').flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });
    (await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'))).flush(issued('new-token'));
    (await vi.waitFor(() => backend.expectOne('/v1/me'))).flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });
    await expect(answer).rejects.toMatchObject({ status: 401 });
    backend.expectNone('/v1/auth/session/refresh');
    expect(session.signedIn()).toBe(false);
    expect(navigate).toHaveBeenCalledWith(['/sign-in'], expect.anything());
  });

  it('signs out and routes to sign-in when the refresh is refused', async () => {
    await signIn('old-token');
    const router = TestBed.inject(Router);
    const navigate = vi.spyOn(router, 'navigate').mockResolvedValue(true);
    const answer = firstValueFrom(http.get('/v1/organisations/org-1/keys'));
    backend.expectOne('/v1/organisations/org-1/keys').flush(sessionExpired, { status: 401, statusText: 'Unauthorized' });
    (await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'))).flush(
      { type: '/problems/refresh-token-reused', title: 'Session ended', status: 401 },
      { status: 401, statusText: 'Unauthorized' },
    );
    await expect(answer).rejects.toMatchObject({ status: 401 });
    expect(session.signedIn()).toBe(false);
    expect(session.accessToken()).toBeNull();
    expect(navigate).toHaveBeenCalledWith(['/sign-in'], expect.objectContaining({ queryParams: expect.objectContaining({ expired: 1 }) }));
  });

  it('never refreshes after a failed sign-in (wrong password is a 401 too)', async () => {
    const attempt = session.signIn('ada@tests.example', 'wrong password!');
    backend
      .expectOne('/v1/auth/session')
      .flush({ type: '/problems/invalid-credentials', title: 'Sign-in failed', status: 401 }, { status: 401, statusText: 'Unauthorized' });
    await expect(attempt).rejects.toMatchObject({ status: 401 });
    backend.expectNone('/v1/auth/session/refresh');
  });
  it('leaves a request with its own API key alone: no session token, no organisation, no refresh on 401', async () => {
    await signIn('access-1');
    const headers = { Authorization: 'Bearer fwk_test_key' };
    const answer = firstValueFrom(http.post('/v1/eos/evaluate', {}, { headers }));
    const call = backend.expectOne('/v1/eos/evaluate');
    expect(call.request.headers.get('Authorization')).toBe('Bearer fwk_test_key');
    expect(call.request.headers.has('Fermiwell-Organisation')).toBe(false);
    call.flush({ type: '/problems/invalid-api-key', title: 'Invalid key', status: 401 }, { status: 401, statusText: 'Unauthorized' });
    await expect(answer).rejects.toMatchObject({ status: 401 });
    backend.expectNone('/v1/auth/session/refresh');
    expect(session.signedIn()).toBe(true);
  });
});
