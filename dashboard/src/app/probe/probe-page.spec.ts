import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { ActivatedRoute, convertToParamMap, provideRouter } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import { sessionInterceptor } from '../core/session-interceptor';
import { fakeSession } from '../shared/testing';
import type { EvaluateResponse } from './eos-types';
import { ProbePage } from './probe-page';

const answer: EvaluateResponse = {
  meta: {
    operation: 'evaluate', modelVersion: 'fermiwell-eos test', constantsSet: 'CODATA 2018', method: 'exact', inverseProblem: null,
    points: 2, components: ['electrons', 'positrons', 'ions', 'photons', 'coulomb'], computeMs: 1.8, statusMessageCount: 1,
    warningCount: 1, detailsTruncated: false,
  },
  values: { density: [1e6, 1e16], temperature: [1e8, 1e8], pressure: [2.656826403316559e22, null] },
  components: { electrons: { pressure: [2.6e22, null] } },
  status: [0, 3],
  warningFlags: [4, 0],
  statusMessages: [{ point: 1, status: 3, code: 'DENSITY_OUT_OF_RANGE', message: 'density 1e16 g/cm³ is above 1e15' }],
  warnings: [{ point: 0, code: 'CRYSTALLIZED', message: 'Γ = 200 is above the melting value 175' }],
};

const SAVED = {
  id: '7b0c4a3e-3c1e-4a55-9f0e-2f5b7d1e9a10', name: 'Helium shell', description: '', builtin: false,
  nuclides: [{ nuclide: 'He4', a: 4, z: 2, massFraction: 1 }], abar: 4, zbar: 2, ye: 0.5, createdAt: null, updatedAt: null,
};

describe('ProbePage', () => {
  async function setup(query: Record<string, string> = {}) {
    TestBed.configureTestingModule({
      imports: [ProbePage],
      providers: [
        provideRouter([]),
        { provide: ActivatedRoute, useValue: { snapshot: { queryParamMap: convertToParamMap(query) } } },
        provideHttpClient(withInterceptors([sessionInterceptor])),
        provideHttpClientTesting(),
        { provide: AuthSession, useValue: fakeSession().fake },
      ],
    });
    await TestBed.compileComponents();
    const fixture = TestBed.createComponent(ProbePage);
    await fixture.whenStable();
    TestBed.inject(HttpTestingController).expectOne('/v1/mixtures').flush({ items: [SAVED] });
    await fixture.whenStable();
    return { fixture, page: fixture.componentInstance, el: fixture.nativeElement as HTMLElement, backend: TestBed.inject(HttpTestingController) };
  }

  it('passes a key typed after the page opened on to the plots (their draw buttons enable)', async () => {
    const { fixture, page, el } = await setup();
    const drawButtons = () => [...el.querySelectorAll('fw-regime-map button, fw-state-curves button')].filter((b) => /Draw/.test(b.textContent ?? '')) as HTMLButtonElement[];
    expect(page.apiKey()).toBe('');
    expect(drawButtons().every((b) => b.disabled)).toBe(true);

    page.form.controls.apiKey.setValue('fwk_abcdefgh_ABCDEFGHIJKLMNOPQRSTUVWXYZ012345');
    await fixture.whenStable();
    expect(page.apiKey()).toBe('fwk_abcdefgh_ABCDEFGHIJKLMNOPQRSTUVWXYZ012345');
    expect(drawButtons().length).toBe(2);
    expect(drawButtons().every((b) => !b.disabled)).toBe(true);
  });

  it('shows the request as code before a key is pasted (the snippets read $FERMIWELL_KEY), but sends nothing', async () => {
    const { fixture, page, el, backend } = await setup();
    expect(page.form.controls.apiKey.value).toBe('');
    expect(page.request()).toBeNull();
    expect(page.snippetRequest()).toMatchObject({ body: { density: [1e6, 1e7], temperature: 1e8, composition: { mixture: 'c12-o16' } } });
    expect(page.snippetRequest()!.url).toMatch(/\/v1\/eos\/evaluate$/);
    await fixture.whenStable();
    expect(el.querySelector('fw-snippets')!.textContent).toContain('FERMIWELL_KEY');
    expect(el.querySelector('fw-snippets')!.textContent).not.toContain('Complete the form');

    // an invalid request still has no snippet
    page.form.controls.density.setValue('1e6, nope');
    await fixture.whenStable();
    expect(page.snippetRequest()).toBeNull();
    expect(el.querySelector('fw-snippets')!.textContent).toContain('Complete the form');
    await page.send();
    backend.expectNone('/v1/eos/evaluate');
  });

  it('shows the model caution and validates the forward form inline', async () => {
    const { fixture, page, el } = await setup();
    expect(el.textContent).toContain('fully ionized');
    expect(el.textContent).toContain('neutron drip');
    expect(page.form.controls.apiKey.hasError('required')).toBe(true);

    page.form.controls.density.setValue('1e6, nope');
    page.form.controls.density.markAsTouched();
    await fixture.whenStable();
    expect(el.textContent).toContain('Use numbers like');

    page.form.controls.density.setValue('1e6, 1e7');
    page.form.controls.temperature.setValue('1e8, 2e8, 3e8');
    await fixture.whenStable();
    expect(page.listsMismatch()).toBe(true);
    expect(el.textContent).toContain('same length');
    expect(page.request()).toBeNull();
  });

  it('switches to the inverse form with the chosen pair and composition by Abar/Zbar', async () => {
    const { fixture, page, el } = await setup();
    page.form.controls.apiKey.setValue('fwk_spec_key');
    page.form.controls.mode.setValue('inverse');
    page.form.controls.pair.setValue('pressure-entropy');
    page.form.controls.first.setValue('1e22');
    page.form.controls.second.setValue('-3');
    await fixture.whenStable();
    expect(page.form.controls.second.hasError('notPositive')).toBe(true);
    page.form.controls.second.setValue('1e8');
    page.form.controls.compositionKind.setValue('mean');
    page.form.controls.mean.setValue({ abar: 4, zbar: 6 });
    await fixture.whenStable();
    expect(page.form.controls.mean.hasError('zbarAboveLimit')).toBe(true);
    expect(el.textContent).toContain('Zbar cannot exceed Abar');
    page.form.controls.mean.setValue({ abar: 4, zbar: 2 });
    await fixture.whenStable();
    expect(page.request()).toMatchObject({ operation: 'invert', body: { pressure: 1e22, specificEntropy: 1e8, composition: { abar: 4, zbar: 2 } } });
    expect(page.snippetRequest()!.url).toMatch(/\/v1\/eos\/invert$/);
  });

  it('needs valid nuclides and at least one component', async () => {
    const { fixture, page } = await setup();
    page.form.controls.apiKey.setValue('fwk_spec_key');
    page.form.controls.compositionKind.setValue('nuclides');
    page.form.controls.nuclides.at(0).controls.massFraction.setValue(0.7);
    await fixture.whenStable();
    expect(page.form.valid).toBe(false);
    page.form.controls.nuclides.at(0).controls.massFraction.setValue(0.5);
    for (const c of Object.values(page.form.controls.components.controls)) c.setValue(false);
    await fixture.whenStable();
    expect(page.form.controls.components.hasError('noComponent')).toBe(true);
    expect(page.request()).toBeNull();
  });

  it('sends with the pasted key, not the session token, and shows values, components and statuses', async () => {
    const { fixture, page, el, backend } = await setup();
    page.form.controls.apiKey.setValue('fwk_spec_key');
    page.form.controls.breakdown.setValue(true);
    await fixture.whenStable();
    const sent = page.send();
    const call = backend.expectOne('/v1/eos/evaluate');
    expect(call.request.method).toBe('POST');
    expect(call.request.headers.get('Authorization')).toBe('Bearer fwk_spec_key');
    expect(call.request.body).toMatchObject({ density: [1e6, 1e7], temperature: 1e8, composition: { mixture: 'c12-o16' }, breakdown: true });
    call.flush(answer);
    await sent;
    await fixture.whenStable();
    expect(el.textContent).toContain('2.657×10²² erg/cm³');
    // the answer says which method computed it
    expect(el.querySelector('p.meta')!.textContent!.replace(/\s+/g, ' ')).toContain('2 point(s) · exact method ·');
    expect(el.querySelector('.component-row')!.textContent).toContain('electrons');
    expect(el.textContent).toContain('Density outside');
    expect(el.textContent).toContain('Γ = 200 is above the melting value 175');
    expect(page.markedPoints()).toEqual([{ density: 1e6, temperature: 1e8 }, { density: 1e16, temperature: 1e8 }]);
    backend.verify();
  });

  it('shows the problem detail when the API refuses', async () => {
    const { fixture, page, el, backend } = await setup();
    page.form.controls.apiKey.setValue('fwk_spec_key');
    const sent = page.send();
    backend.expectOne('/v1/eos/evaluate').flush(
      { type: '/problems/insufficient-scope', title: 'Forbidden', status: 403, detail: 'Key lacks the "eos:evaluate" scope.' },
      { status: 403, statusText: 'Forbidden' },
    );
    await sent;
    await fixture.whenStable();
    expect(el.querySelector('[role="alert"]')!.textContent).toContain('lacks the "eos:evaluate" scope');
  });

  it('does not send an invalid form', async () => {
    const { page, backend } = await setup();
    await page.send();
    backend.expectNone('/v1/eos/evaluate');
  });

  it("offers the organisation's saved mixtures and opens with the one named in ?mixture=", async () => {
    const { page, backend } = await setup({ mixture: SAVED.id });
    expect(page.savedMixtures().map((m) => m.id)).toEqual([SAVED.id]);
    expect(page.form.controls.compositionKind.value).toBe('mixture');
    page.form.controls.apiKey.setValue('fwk_abcdefgh_ABCDEFGHIJKLMNOPQRSTUVWXYZ012345');
    void page.send();
    const call = backend.expectOne('/v1/eos/evaluate');
    expect(call.request.body).toMatchObject({ composition: { mixture: SAVED.id } });
    call.flush(answer);
  });
});
