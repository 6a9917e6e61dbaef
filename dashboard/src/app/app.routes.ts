import { Routes } from '@angular/router';

import { operatorGuard, organisationGuard, signedInGuard, signedOutGuard } from './core/auth-guard';

/**
 * Two lazily loaded layouts: the plain one for signing in and the pages mail links open, and the signed-in
 * shell with one lazily loaded page per feature folder (DESIGN.md §2, §7).
 *
 * Paths must not collide with what the gateway serves itself on the same origin
 * (/v1, /graphql, /docs, /openapi.json, /metrics, /healthz, /readyz, /problems): the gateway answers
 * those before its history-API fallback, so a reload on a colliding dashboard URL would leave the
 * dashboard. That is why the Docs page lives at /documentation and links out to /docs.
 * The mail links of gateway/auth/README.md land on /verify-email, /reset-password, /join,
 * /sign-in and /forgot-password.
 */
export const routes: Routes = [
  // First: an empty-path parent with children would otherwise match '/' with no child page.
  { path: '', pathMatch: 'full', redirectTo: 'overview' },
  {
    path: '',
    loadComponent: () => import('./auth/auth-layout').then((m) => m.AuthLayout),
    children: [
      {
        path: 'sign-in',
        title: 'Sign in · Fermiwell',
        canActivate: [signedOutGuard],
        loadComponent: () => import('./auth/sign-in-page').then((m) => m.SignInPage),
      },
      {
        path: 'sign-up',
        title: 'Create account · Fermiwell',
        canActivate: [signedOutGuard],
        loadComponent: () => import('./auth/sign-up-page').then((m) => m.SignUpPage),
      },
      {
        path: 'verify-email',
        title: 'Confirm e-mail · Fermiwell',
        loadComponent: () => import('./auth/verify-email-page').then((m) => m.VerifyEmailPage),
      },
      {
        path: 'forgot-password',
        title: 'Forgot password · Fermiwell',
        loadComponent: () => import('./auth/forgot-password-page').then((m) => m.ForgotPasswordPage),
      },
      {
        path: 'reset-password',
        title: 'New password · Fermiwell',
        loadComponent: () => import('./auth/reset-password-page').then((m) => m.ResetPasswordPage),
      },
      {
        path: 'join',
        title: 'Join · Fermiwell',
        loadComponent: () => import('./auth/accept-invitation-page').then((m) => m.AcceptInvitationPage),
      },
      {
        path: 'new-organisation',
        title: 'New organisation · Fermiwell',
        canActivate: [signedInGuard],
        loadComponent: () =>
          import('./organisations/new-organisation-page').then((m) => m.NewOrganisationPage),
      },
    ],
  },
  {
    path: '',
    loadComponent: () => import('./shell/shell-layout').then((m) => m.ShellLayout),
    canActivate: [signedInGuard],
    children: [
      {
        path: 'overview',
        title: 'Overview · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./overview/overview-page').then((m) => m.OverviewPage),
      },
      {
        path: 'keys',
        title: 'Keys · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./keys/keys-page').then((m) => m.KeysPage),
      },
      {
        path: 'probe',
        title: 'Probe · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./probe/probe-page').then((m) => m.ProbePage),
      },
      {
        path: 'usage',
        title: 'Usage · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./usage/usage-page').then((m) => m.UsagePage),
      },
      {
        path: 'jobs',
        title: 'Jobs · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./jobs/jobs-page').then((m) => m.JobsPage),
      },
      {
        path: 'mixtures',
        title: 'Mixtures · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./mixtures/mixtures-page').then((m) => m.MixturesPage),
      },
      {
        path: 'team',
        title: 'Team · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./team/team-page').then((m) => m.TeamPage),
      },
      {
        path: 'billing',
        title: 'Plan & billing · Fermiwell',
        canActivate: [organisationGuard],
        loadComponent: () => import('./billing/billing-page').then((m) => m.BillingPage),
      },
      {
        path: 'documentation',
        title: 'Docs · Fermiwell',
        loadComponent: () => import('./docs/docs-page').then((m) => m.DocsPage),
      },
      {
        path: 'operator',
        title: 'Operator · Fermiwell',
        canActivate: [operatorGuard],
        loadComponent: () => import('./operator/operator-page').then((m) => m.OperatorPage),
      },
    ],
  },
  { path: '**', redirectTo: 'overview' },
];
