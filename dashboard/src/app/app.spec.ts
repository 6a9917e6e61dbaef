import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router } from '@angular/router';

import { App } from './app';
import { appConfig } from './app.config';
import { AuthSession } from './core/auth-session';
import { TEST_USER, fakeSession } from './shared/testing';

describe('App shell', () => {
  let session: ReturnType<typeof fakeSession>;

  /** The real application providers (routes, guards, zoneless, icon font set) with a stand-in session. */
  async function setUp(options: { operator?: boolean; signedIn?: boolean } = {}) {
    session = fakeSession({ ...TEST_USER, platformRole: options.operator === false ? null : 'operator' });
    if (options.signedIn === false) session.fake.user.set(null);
    await TestBed.configureTestingModule({
      imports: [App],
      providers: [
        ...appConfig.providers,
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: AuthSession, useValue: session.fake },
      ],
    }).compileComponents();
  }

  async function renderAt(url: string) {
    const fixture = TestBed.createComponent(App);
    await TestBed.inject(Router).navigateByUrl(url);
    await settle(fixture);
    return fixture.nativeElement as HTMLElement;
  }

  /**
   * Pages load their data when they open; this spec is about the shell, so every data call is
   * answered 503 (the pages settle in their error state) until the app is stable.
   */
  async function settle(fixture: { whenStable(): Promise<unknown> }) {
    const backend = TestBed.inject(HttpTestingController);
    let stable = false;
    const answering = (async () => {
      while (!stable) {
        for (const request of backend.match(() => true)) {
          request.flush({ type: '/problems/unavailable', title: 'Unavailable', status: 503 }, { status: 503, statusText: 'Service Unavailable' });
        }
        await new Promise((resolve) => setTimeout(resolve, 5));
      }
    })();
    await fixture.whenStable();
    stable = true;
    await answering;
  }

  it('shows the Fermiwell wordmark in the toolbar', async () => {
    await setUp();
    const shell = await renderAt('/');
    expect(shell.querySelector('mat-toolbar .fw-wordmark')?.textContent?.trim()).toBe('Fermiwell');
  });

  it('lists the ten pages of the dashboard in order for an operator, Operator set apart', async () => {
    await setUp();
    const shell = await renderAt('/');
    expect(shell.querySelectorAll('a.fw-nav-entry')).toHaveLength(10);
    const titles = Array.from(shell.querySelectorAll('a.fw-nav-entry [matListItemTitle]')).map(
      (el) => el.textContent?.trim(),
    );
    expect(titles).toEqual([
      'Overview',
      'Keys',
      'Probe',
      'Usage',
      'Jobs',
      'Mixtures',
      'Team',
      'Plan & billing',
      'Docs',
      'Operator',
    ]);
    const operatorList = shell.querySelector('.fw-operator-nav');
    expect(operatorList?.textContent).toContain('Operator only');
    expect(operatorList?.querySelectorAll('a.fw-nav-entry')).toHaveLength(1);
  });

  it('hides the Operator page from everyone else and guards its route', async () => {
    await setUp({ operator: false });
    const shell = await renderAt('/operator');
    expect(TestBed.inject(Router).url).toBe('/overview');
    expect(shell.querySelectorAll('a.fw-nav-entry')).toHaveLength(9);
    expect(shell.querySelector('.fw-operator-nav')).toBeNull();
  });

  it('sends a signed-out visitor to sign-in, without the side navigation', async () => {
    await setUp({ signedIn: false });
    const shell = await renderAt('/keys');
    expect(TestBed.inject(Router).url).toBe('/sign-in?returnUrl=%2Fkeys');
    expect(shell.querySelector('mat-sidenav')).toBeNull();
    expect(shell.querySelector('h1')?.textContent).toBe('Sign in');
  });

  it('shows the current organisation and the account menu in the toolbar', async () => {
    await setUp();
    const shell = await renderAt('/overview');
    expect(shell.querySelector('.fw-org-switcher')?.textContent).toContain('Merger group');
    expect(shell.querySelector('.fw-user-button')?.getAttribute('aria-label')).toBe('Account menu for Dana Postdoc');
  });

  it('gives every navigation entry a Material Symbols icon', async () => {
    await setUp();
    const shell = await renderAt('/');
    const icons = Array.from(shell.querySelectorAll('a.fw-nav-entry mat-icon'));
    expect(icons).toHaveLength(10);
    for (const icon of icons) {
      expect(icon.classList).toContain('material-symbols-outlined');
      expect(icon.textContent?.trim()).not.toBe('');
    }
  });

  it('redirects the root to Overview', async () => {
    await setUp();
    const shell = await renderAt('/');
    expect(TestBed.inject(Router).url).toBe('/overview');
    expect(shell.querySelector('main h1')?.textContent).toBe('Overview');
  });

  it('routes to a lazily loaded page and marks its entry as current', async () => {
    await setUp();
    const shell = await renderAt('/probe');
    expect(shell.querySelector('main h1')?.textContent).toBe('Probe');
    const current = shell.querySelector('a.fw-nav-entry[aria-current="page"]');
    expect(current?.getAttribute('href')).toBe('/probe');
  });

  it('navigates when a navigation entry is clicked', async () => {
    await setUp();
    const shell = await renderAt('/overview');
    const jobsLink = shell.querySelector<HTMLAnchorElement>('a.fw-nav-entry[href="/jobs"]');
    expect(jobsLink).not.toBeNull();
    jobsLink!.click();
    // The page is lazily loaded: wait for the navigation, then for the page to render.
    const router = TestBed.inject(Router);
    await vi.waitFor(() => expect(router.url).toBe('/jobs'));
    await vi.waitFor(() => expect(shell.querySelector('main h1')?.textContent).toBe('Jobs'));
    expect(shell.querySelector('main .fw-page-lead')?.textContent).toContain('free-energy tables built for your code');
  });

  it('states the model caution on every page', async () => {
    await setUp();
    const shell = await renderAt('/usage');
    expect(shell.querySelector('footer')?.textContent).toContain(
      'Model assumes fully ionized matter; no nuclear physics beyond neutron drip.',
    );
  });

  it('states the model caution on the sign-in page too', async () => {
    await setUp({ signedIn: false });
    const shell = await renderAt('/sign-in');
    expect(shell.querySelector('footer')?.textContent).toContain(
      'Model assumes fully ionized matter; no nuclear physics beyond neutron drip.',
    );
  });
});
