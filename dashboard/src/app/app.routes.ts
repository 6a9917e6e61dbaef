import { Routes } from '@angular/router';

/**
 * One lazily loaded page per feature folder (DESIGN.md §2, §7).
 *
 * Paths must not collide with what the gateway serves itself on the same origin
 * (/v1, /graphql, /docs, /metrics, /healthz, /readyz): the gateway answers those before its
 * history-API fallback, so a reload on a colliding dashboard URL would leave the dashboard.
 * That is why the Docs page lives at /documentation and links out to /docs.
 */
export const routes: Routes = [
  { path: '', pathMatch: 'full', redirectTo: 'overview' },
  {
    path: 'overview',
    title: 'Overview · Fermiwell',
    loadComponent: () => import('./overview/overview-page').then((m) => m.OverviewPage),
  },
  {
    path: 'keys',
    title: 'Keys · Fermiwell',
    loadComponent: () => import('./keys/keys-page').then((m) => m.KeysPage),
  },
  {
    path: 'probe',
    title: 'Probe · Fermiwell',
    loadComponent: () => import('./probe/probe-page').then((m) => m.ProbePage),
  },
  {
    path: 'usage',
    title: 'Usage · Fermiwell',
    loadComponent: () => import('./usage/usage-page').then((m) => m.UsagePage),
  },
  {
    path: 'jobs',
    title: 'Jobs · Fermiwell',
    loadComponent: () => import('./jobs/jobs-page').then((m) => m.JobsPage),
  },
  {
    path: 'mixtures',
    title: 'Mixtures · Fermiwell',
    loadComponent: () => import('./mixtures/mixtures-page').then((m) => m.MixturesPage),
  },
  {
    path: 'team',
    title: 'Team · Fermiwell',
    loadComponent: () => import('./team/team-page').then((m) => m.TeamPage),
  },
  {
    path: 'billing',
    title: 'Plan & billing · Fermiwell',
    loadComponent: () => import('./billing/billing-page').then((m) => m.BillingPage),
  },
  {
    path: 'documentation',
    title: 'Docs · Fermiwell',
    loadComponent: () => import('./docs/docs-page').then((m) => m.DocsPage),
  },
  {
    // Operator-only: a role guard belongs here once sign-in exists.
    path: 'operator',
    title: 'Operator · Fermiwell',
    loadComponent: () => import('./operator/operator-page').then((m) => m.OperatorPage),
  },
  { path: '**', redirectTo: 'overview' },
];
