import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';

import { TEST_USER } from '../shared/testing';
import type { IssuedSession } from './api-types';
import { AuthSession, SESSION_HINT_STORAGE_KEY } from './auth-session';

const user = TEST_USER;
const issued: IssuedSession = { accessToken: 'access-1', tokenType: 'Bearer', expiresIn: 900, user };
const noSession = { type: '/problems/session-required', title: 'No session', status: 401 };

describe('AuthSession restore after a load', () => {
  let backend: HttpTestingController;

  /** A fresh page load: a new service, as after a reload. */
  function load(): AuthSession {
    TestBed.resetTestingModule();
    TestBed.configureTestingModule({ providers: [provideRouter([]), provideHttpClient(), provideHttpClientTesting()] });
    backend = TestBed.inject(HttpTestingController);
    return TestBed.inject(AuthSession);
  }

  beforeEach(() => localStorage.clear());
  afterEach(() => backend.verify());

  it('asks once in a new browser; after a refused refresh, signed-out loads ask nothing (no 401 in the console)', async () => {
    const first = load().restore();
    (await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'))).flush(noSession, { status: 401, statusText: 'Unauthorized' });
    expect(await first).toBe(false);
    expect(localStorage.getItem(SESSION_HINT_STORAGE_KEY)).toBe('0');

    expect(await load().restore()).toBe(false);
    backend.expectNone('/v1/auth/session/refresh');
  });

  it('after a sign-in the next load restores the session from the cookie again', async () => {
    localStorage.setItem(SESSION_HINT_STORAGE_KEY, '0');
    const session = load();
    const signIn = session.signIn(TEST_USER.email, 'correct horse battery');
    backend.expectOne('/v1/auth/session').flush(issued);
    await vi.waitFor(() => backend.expectOne('/v1/me').flush({ user, organisations: [], currentOrganisation: null }));
    await signIn;
    expect(localStorage.getItem(SESSION_HINT_STORAGE_KEY)).toBe('1');

    const restored = load().restore();
    (await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'))).flush(issued);
    await vi.waitFor(() => backend.expectOne('/v1/me').flush({ user, organisations: [], currentOrganisation: null }));
    expect(await restored).toBe(true);
  });

  it('signing out marks the browser signed out; a refresh that got no answer does not', async () => {
    const session = load();
    localStorage.setItem(SESSION_HINT_STORAGE_KEY, '1');
    const unanswered = session.refreshAccessToken();
    (await vi.waitFor(() => backend.expectOne('/v1/auth/session/refresh'))).error(new ProgressEvent('error'), { status: 0 });
    expect(await unanswered).toBeNull();
    expect(localStorage.getItem(SESSION_HINT_STORAGE_KEY)).toBe('1');

    vi.spyOn(TestBed.inject(Router), 'navigateByUrl').mockResolvedValue(true);
    const out = session.signOut();
    backend.expectOne((r) => r.method === 'DELETE' && r.url === '/v1/auth/session').flush(null, { status: 204, statusText: 'No Content' });
    await out;
    expect(localStorage.getItem(SESSION_HINT_STORAGE_KEY)).toBe('0');
  });
});
