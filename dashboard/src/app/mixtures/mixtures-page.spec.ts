import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import type { Mixture } from '../core/mixtures-api';
import { fakeSession } from '../shared/testing';
import { MixturesPage, nuclideSummary } from './mixtures-page';

const PERMISSIONS = '/v1/organisations/org-1/permissions';
const MANAGER = ['mixtures.read', 'mixtures.manage'];

const BUILTIN: Mixture = {
  id: 'c12-o16', name: 'c12-o16', description: 'Carbon–oxygen', builtin: true,
  nuclides: [{ nuclide: 'C12', a: 12, z: 6, massFraction: 0.5 }, { nuclide: 'O16', a: 16, z: 8, massFraction: 0.5 }],
  abar: 13.714285714285714, zbar: 6.857142857142857, ye: 0.5, createdAt: null, updatedAt: null,
};
const SAVED: Mixture = {
  id: '0d9f5c1e-8a61-4f0e-b7de-3b8f2a6c4e11', name: 'Shell with carbon', description: '', builtin: false,
  nuclides: [{ nuclide: 'He4', a: 4, z: 2, massFraction: 0.95 }, { nuclide: 'C12', a: 12, z: 6, massFraction: 0.05 }],
  abar: 4.137931034482759, zbar: 2.0689655172413794, ye: 0.5, createdAt: '2026-11-01T10:00:00Z', updatedAt: '2026-11-02T10:00:00Z',
};

describe('MixturesPage', () => {
  let backend: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
        { provide: AuthSession, useValue: fakeSession().fake },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
  });

  afterEach(() => {
    document.querySelectorAll('.cdk-overlay-container').forEach((el) => (el.innerHTML = ''));
  });

  async function render(items: Mixture[], actions = MANAGER) {
    const fixture = TestBed.createComponent(MixturesPage);
    fixture.detectChanges();
    backend.expectOne('/v1/mixtures').flush({ items });
    backend.expectOne(PERMISSIONS).flush({ role: 'maintainer', platformRole: null, actions });
    await fixture.whenStable();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  const overlay = () => document.querySelector('.cdk-overlay-container') as HTMLElement;
  const button = (root: ParentNode, text: string) =>
    Array.from(root.querySelectorAll('button')).find((b) => b.textContent?.trim().includes(text)) as HTMLButtonElement | undefined;
  const type = (input: HTMLInputElement, value: string) => {
    input.value = value;
    input.dispatchEvent(new Event('input'));
  };

  it('summarises nuclides as label and mass fraction', () => {
    expect(nuclideSummary(SAVED)).toBe('He4 0.95 · C12 0.05');
  });

  it('lists saved and built-in mixtures with Abar, Zbar, Ye and offers changes to a maintainer', async () => {
    const { page } = await render([BUILTIN, SAVED]);
    const saved = page.querySelector(`tr[data-mixture-id="${SAVED.id}"]`)!;
    expect(saved.textContent).toContain('Shell with carbon');
    expect(saved.textContent).toContain('4.13793');
    expect(saved.querySelector('button.edit')).not.toBeNull();
    const builtin = page.querySelector('tr[data-mixture-id="c12-o16"]')!;
    expect(builtin.textContent).toContain('13.7143');
    expect(builtin.querySelector('button.edit')).toBeNull();
    expect(button(page, 'New mixture')).toBeDefined();
  });

  it('shows the empty state and no change buttons to a viewer', async () => {
    const { page } = await render([BUILTIN], ['mixtures.read']);
    expect(page.textContent).toContain('No saved mixtures yet.');
    expect(page.textContent).toContain('Maintainers and owners can save them.');
    expect(button(page, 'New mixture')).toBeUndefined();
  });

  it('shows an error with a retry when the list cannot be loaded', async () => {
    const fixture = TestBed.createComponent(MixturesPage);
    fixture.detectChanges();
    backend.expectOne('/v1/mixtures').flush({ type: '/problems/internal', title: 'Oops', status: 503, detail: 'The database is not reachable.' }, { status: 503, statusText: 'Unavailable' });
    backend.expectOne(PERMISSIONS).flush({ role: 'maintainer', platformRole: null, actions: MANAGER });
    await fixture.whenStable();
    const page = fixture.nativeElement as HTMLElement;
    expect(page.textContent).toContain('The database is not reachable.');
    button(page, 'Try again')!.click();
    backend.expectOne('/v1/mixtures').flush({ items: [BUILTIN] });
    backend.expectOne(PERMISSIONS).flush({ role: 'maintainer', platformRole: null, actions: MANAGER });
    await fixture.whenStable();
    expect(page.querySelector('tr[data-mixture-id="c12-o16"]')).not.toBeNull();
  });

  it('refuses fractions that do not sum to 1 before sending, then saves once with an Idempotency-Key', async () => {
    const { fixture, page } = await render([BUILTIN]);
    button(page, 'New mixture')!.click();
    await fixture.whenStable();
    type(overlay().querySelector('input[formcontrolname="name"]') as HTMLInputElement, 'Shell with carbon');
    const fractions = overlay().querySelectorAll('input[formcontrolname="massFraction"]') as NodeListOf<HTMLInputElement>;
    type(fractions[0]!, '0.5');
    type(fractions[1]!, '0.4');
    await fixture.whenStable();
    expect(overlay().textContent).toContain('Mass fractions add up to 0.9');
    button(overlay(), 'Save mixture')!.click();
    await fixture.whenStable();
    backend.expectNone((r) => r.method === 'POST');
    type(fractions[1]!, '0.5');
    await fixture.whenStable();
    button(overlay(), 'Save mixture')!.click();
    const post = backend.expectOne((r) => r.method === 'POST' && r.url === '/v1/mixtures');
    expect(post.request.headers.get('Idempotency-Key')).toMatch(/^[0-9a-f-]{36}$/);
    expect(post.request.body).toEqual({
      name: 'Shell with carbon',
      description: '',
      nuclides: [{ a: 12, z: 6, massFraction: 0.5 }, { a: 16, z: 8, massFraction: 0.5 }],
    });
    post.flush({ ...SAVED, nuclides: BUILTIN.nuclides });
    await fixture.whenStable();
    expect(page.querySelector(`tr[data-mixture-id="${SAVED.id}"]`)).not.toBeNull();
  });

  it('says so when the name is already used in the organisation', async () => {
    const { fixture, page } = await render([BUILTIN, SAVED]);
    button(page, 'New mixture')!.click();
    await fixture.whenStable();
    const name = overlay().querySelector('input[formcontrolname="name"]') as HTMLInputElement;
    type(name, 'shell with carbon');
    name.dispatchEvent(new Event('blur'));
    button(overlay(), 'Save mixture')!.click();
    await fixture.whenStable();
    expect(overlay().textContent).toContain('already has a mixture with this name');
    backend.expectNone((r) => r.method === 'POST');
  });
});
