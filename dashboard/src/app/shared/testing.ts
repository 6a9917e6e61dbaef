import { signal } from '@angular/core';

import type { Organisation, User } from '../core/api-types';
import { AuthSession } from '../core/auth-session';

/** Test data, invented for specs only. */
export const TEST_USER: User = {
  id: 'u-dana',
  email: 'dana@tests.example',
  displayName: 'Dana Postdoc',
  emailVerified: true,
  platformRole: null,
  createdAt: '2026-01-05T10:00:00Z',
};

export const TEST_ORGANISATION: Organisation = {
  id: 'org-1',
  name: 'Merger group',
  slug: 'merger-group',
  plan: 'free',
  createdAt: '2026-01-05T10:00:00Z',
  memberCount: 2,
  role: 'owner',
};

/**
 * A signed-in AuthSession stand-in for component specs (no HTTP, no refresh timers). Plain
 * functions, no test-runner globals: this file is type-checked with the app too.
 */
export function fakeSession(user: User = TEST_USER, organisations: Organisation[] = [TEST_ORGANISATION]) {
  const organisationId = signal<string | null>(organisations[0]?.id ?? null);
  const userSignal = signal<User | null>(user);
  const fake = {
    user: userSignal,
    organisations: signal(organisations),
    organisationId,
    signedIn: () => userSignal() !== null,
    isOperator: () => userSignal()?.platformRole === 'operator',
    currentOrganisation: () => organisations.find((o) => o.id === organisationId()) ?? null,
    accessToken: () => 'test-access-token',
    restore: () => Promise.resolve(userSignal() !== null),
    selectOrganisation: (id: string | null) => organisationId.set(id),
    signOut: async () => userSignal.set(null),
    loadMe: async () => undefined,
    endSession: () => userSignal.set(null),
  };
  return { provide: AuthSession, useValue: fake as unknown as AuthSession, fake };
}
