import { inject } from '@angular/core';
import { CanActivateFn, Router } from '@angular/router';

import { AuthSession } from './auth-session';

/** Pages of a signed-in person; everyone else goes to sign-in and comes back afterwards. */
export const signedInGuard: CanActivateFn = async (_route, state) => {
  const session = inject(AuthSession);
  const router = inject(Router);
  if (await session.restore()) return true;
  return router.createUrlTree(['/sign-in'], { queryParams: { returnUrl: state.url } });
};

/** Pages of one organisation: without any, the person creates one first. */
export const organisationGuard: CanActivateFn = async () => {
  const session = inject(AuthSession);
  const router = inject(Router);
  if (!(await session.restore())) return router.createUrlTree(['/sign-in']);
  if (session.organisationId() || session.isOperator()) return true;
  return router.createUrlTree(['/new-organisation']);
};

/** Platform pages: operators only (the server enforces it as well). */
export const operatorGuard: CanActivateFn = async () => {
  const session = inject(AuthSession);
  const router = inject(Router);
  if (!(await session.restore())) return router.createUrlTree(['/sign-in']);
  return session.isOperator() ? true : router.createUrlTree(['/overview']);
};

/** Sign-in and sign-up: someone already signed in goes on to the dashboard. */
export const signedOutGuard: CanActivateFn = async (route) => {
  const session = inject(AuthSession);
  const router = inject(Router);
  if (!(await session.restore())) return true;
  const returnUrl = route.queryParamMap.get('returnUrl');
  return router.parseUrl(returnUrl && returnUrl.startsWith('/') && !returnUrl.startsWith('//') ? returnUrl : '/overview');
};
