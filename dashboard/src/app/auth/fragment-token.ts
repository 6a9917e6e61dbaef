import { Location } from '@angular/common';
import { inject } from '@angular/core';
import { ActivatedRoute } from '@angular/router';

/**
 * Mail links carry their one-time token in the URL fragment (`/verify-email#token=…`), so it never
 * reaches a server log. Reads it once and takes it out of the address bar and history.
 * Call in an injection context.
 */
export function takeFragmentToken(): string | null {
  const route = inject(ActivatedRoute);
  const location = inject(Location);
  const fragment = route.snapshot.fragment ?? '';
  const token = new URLSearchParams(fragment).get('token');
  if (token) location.replaceState(location.path(false).split('#')[0] ?? '');
  return token && token.trim() ? token.trim() : null;
}
