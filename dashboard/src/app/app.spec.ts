import { TestBed } from '@angular/core/testing';
import { Router } from '@angular/router';

import { App } from './app';
import { appConfig } from './app.config';

describe('App shell', () => {
  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [App],
      // The real application providers: routes, zoneless change detection, icon font set.
      providers: appConfig.providers,
    }).compileComponents();
  });

  async function renderAt(url: string) {
    const fixture = TestBed.createComponent(App);
    await TestBed.inject(Router).navigateByUrl(url);
    await fixture.whenStable();
    return fixture.nativeElement as HTMLElement;
  }

  it('shows the Fermiwell wordmark in the toolbar', async () => {
    const shell = await renderAt('/');
    expect(shell.querySelector('mat-toolbar .fw-wordmark')?.textContent?.trim()).toBe('Fermiwell');
  });

  it('lists the ten pages of the dashboard in order, Operator set apart', async () => {
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

  it('gives every navigation entry a Material Symbols icon', async () => {
    const shell = await renderAt('/');
    const icons = Array.from(shell.querySelectorAll('a.fw-nav-entry mat-icon'));
    expect(icons).toHaveLength(10);
    for (const icon of icons) {
      expect(icon.classList).toContain('material-symbols-outlined');
      expect(icon.textContent?.trim()).not.toBe('');
    }
  });

  it('redirects the root to Overview', async () => {
    const shell = await renderAt('/');
    expect(TestBed.inject(Router).url).toBe('/overview');
    expect(shell.querySelector('main h1')?.textContent).toBe('Overview');
  });

  it('routes to a lazily loaded page and marks its entry as current', async () => {
    const shell = await renderAt('/keys');
    expect(shell.querySelector('main h1')?.textContent).toBe('Keys');
    expect(shell.querySelector('main p')?.textContent).toBe('This page arrives with issue 6.');
    const current = shell.querySelector('a.fw-nav-entry[aria-current="page"]');
    expect(current?.getAttribute('href')).toBe('/keys');
  });

  it('navigates when a navigation entry is clicked', async () => {
    const shell = await renderAt('/overview');
    const jobsLink = shell.querySelector<HTMLAnchorElement>('a.fw-nav-entry[href="/jobs"]');
    expect(jobsLink).not.toBeNull();
    jobsLink!.click();
    // The page is lazily loaded: wait for the navigation, then for the page to render.
    const router = TestBed.inject(Router);
    await vi.waitFor(() => expect(router.url).toBe('/jobs'));
    await vi.waitFor(() => expect(shell.querySelector('main h1')?.textContent).toBe('Jobs'));
    expect(shell.querySelector('main p')?.textContent).toBe('This page arrives with issue 9.');
  });

  it('states the model caution on every page', async () => {
    const shell = await renderAt('/usage');
    expect(shell.querySelector('footer')?.textContent).toContain(
      'Model assumes fully ionized matter; no nuclear physics beyond neutron drip.',
    );
  });
});
