import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import type { ApiKey } from '../core/api-types';
import { AuthSession } from '../core/auth-session';
import { fakeSession } from '../shared/testing';
import { KeysPage } from './keys-page';

const KEYS = '/v1/organisations/org-1/keys';
const PERMISSIONS = '/v1/organisations/org-1/permissions';
const DEVELOPER_ACTIONS = ['keys.read', 'keys.create', 'keys.manage-own'];

function key(overrides: Partial<ApiKey> = {}): ApiKey {
  return {
    id: 'ab12cd34',
    name: 'cluster runs',
    prefix: 'fwk_ab12cd34_',
    scopes: ['eos:evaluate'],
    createdBy: { id: 'u-dana', displayName: 'Dana Postdoc', email: 'dana@tests.example' },
    createdAt: '2026-02-01T09:00:00Z',
    lastUsedAt: null,
    expiresAt: null,
    revokedAt: null,
    rotatedAt: null,
    previousSecretValidUntil: null,
    state: 'active',
    ...overrides,
  };
}

describe('KeysPage', () => {
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

  async function render(keys: ApiKey[], actions = DEVELOPER_ACTIONS) {
    const fixture = TestBed.createComponent(KeysPage);
    fixture.detectChanges();
    backend.expectOne(KEYS).flush({ items: keys });
    backend.expectOne(PERMISSIONS).flush({ role: 'developer', platformRole: null, actions });
    await fixture.whenStable();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  const overlay = () => document.querySelector('.cdk-overlay-container') as HTMLElement;
  const button = (root: ParentNode, text: string) =>
    Array.from(root.querySelectorAll('button')).find((b) => b.textContent?.trim().includes(text)) as HTMLButtonElement | undefined;

  it('shows the empty state and offers Create key to a developer', async () => {
    const { page } = await render([]);
    expect(page.textContent).toContain('No keys yet.');
    expect(button(page, 'Create key')).toBeDefined();
  });

  it('hides Create key and the row actions from a viewer', async () => {
    const { page } = await render([key({ createdBy: { id: 'someone-else', displayName: 'Lee', email: 'lee@tests.example' } })], ['keys.read']);
    expect(button(page, 'Create key')).toBeUndefined();
    expect(page.querySelector('button.revoke')).toBeNull();
    expect(page.querySelector('tr[data-key-id="ab12cd34"]')?.textContent).toContain('fwk_ab12cd34_');
  });

  it('lists keys with name, public id, scopes, creator, expiry and state, and filters them', async () => {
    const { fixture, page } = await render([
      key(),
      key({ id: 'zz99yy88', prefix: 'fwk_zz99yy88_', name: 'laptop tests', state: 'revoked', scopes: ['usage:read'] }),
    ]);
    const rows = page.querySelectorAll('tr[data-key-id]');
    expect(rows).toHaveLength(2);
    const first = page.querySelector('tr[data-key-id="ab12cd34"]')!.textContent!;
    for (const text of ['cluster runs', 'fwk_ab12cd34_', 'eos:evaluate', 'Dana Postdoc', 'Never', 'No expiry', 'active']) {
      expect(first).toContain(text);
    }
    const input = page.querySelector('input') as HTMLInputElement;
    input.value = 'laptop';
    input.dispatchEvent(new Event('input'));
    await fixture.whenStable();
    expect(Array.from(page.querySelectorAll('tr[data-key-id]')).map((r) => r.getAttribute('data-key-id'))).toEqual(['zz99yy88']);
    // A revoked key offers no rotate or revoke.
    expect(page.querySelector('tr[data-key-id="zz99yy88"] button.revoke')).toBeNull();
  });

  it('creates a key and shows its secret exactly once', async () => {
    const { fixture, page } = await render([]);
    button(page, 'Create key')!.click();
    await fixture.whenStable();

    const name = overlay().querySelector('input[formcontrolname="name"]') as HTMLInputElement;
    name.value = 'hydro production';
    name.dispatchEvent(new Event('input'));
    button(overlay(), 'Create key')!.click();

    const create = backend.expectOne((r) => r.method === 'POST' && r.url === KEYS);
    expect(create.request.body).toEqual({ name: 'hydro production', scopes: ['eos:evaluate'], expiresAt: null });
    const token = 'fwk_ab12cd34_ABCDEFGHIJKLMNOPQRSTUVWXYZ012345';
    create.flush({ key: key({ name: 'hydro production' }), token });
    await vi.waitFor(() => expect(overlay().querySelector('fw-key-secret-dialog')).not.toBeNull());
    await fixture.whenStable();

    const shown = overlay().querySelector('fw-key-secret-dialog input') as HTMLInputElement;
    expect(shown.value).toBe(token);
    expect(overlay().textContent).toContain('you won’t see this secret again');
    expect(button(overlay(), 'Copy')).toBeDefined();

    // The list shows the new key, but never the secret.
    expect(page.querySelector('tr[data-key-id="ab12cd34"]')?.textContent).toContain('hydro production');
    expect(page.innerHTML).not.toContain(token);

    button(overlay(), 'I have stored it')!.click();
    await vi.waitFor(() => expect(overlay().querySelector('fw-key-secret-dialog')).toBeNull());
    expect(document.body.innerHTML).not.toContain(token);
  });

  it('revokes only after confirmation', async () => {
    const { fixture, page } = await render([key()]);
    (page.querySelector('tr[data-key-id="ab12cd34"] button.revoke') as HTMLButtonElement).click();
    await vi.waitFor(() => expect(overlay().textContent).toContain('Revoke “cluster runs”?'));
    backend.expectNone(`${KEYS}/ab12cd34/revoke`);

    // Cancel: nothing is sent.
    button(overlay(), 'Cancel')!.click();
    await vi.waitFor(() => expect(overlay().querySelector('fw-confirm-dialog')).toBeNull());
    backend.expectNone(`${KEYS}/ab12cd34/revoke`);

    // Confirm: revoked.
    (page.querySelector('tr[data-key-id="ab12cd34"] button.revoke') as HTMLButtonElement).click();
    await vi.waitFor(() => expect(button(overlay(), 'Revoke key')).toBeDefined());
    button(overlay(), 'Revoke key')!.click();
    const revoke = await vi.waitFor(() => backend.expectOne(`${KEYS}/ab12cd34/revoke`));
    expect(revoke.request.method).toBe('POST');
    revoke.flush(key({ state: 'revoked', revokedAt: '2026-02-02T10:00:00Z' }));
    await fixture.whenStable();
    await vi.waitFor(() => expect(page.querySelector('tr[data-key-id="ab12cd34"]')?.textContent).toContain('revoked'));
    expect(page.querySelector('tr[data-key-id="ab12cd34"] button.revoke')).toBeNull();
  });

  it('shows a readable error when the keys cannot be loaded', async () => {
    const fixture = TestBed.createComponent(KeysPage);
    fixture.detectChanges();
    backend.expectOne(KEYS).flush(
      { type: '/problems/forbidden', title: 'Forbidden', status: 403, detail: 'Your role may not read keys here.' },
      { status: 403, statusText: 'Forbidden' },
    );
    backend.expectOne(PERMISSIONS).flush({ role: 'viewer', platformRole: null, actions: [] });
    await fixture.whenStable();
    const page = fixture.nativeElement as HTMLElement;
    expect(page.querySelector('[role="alert"]')?.textContent).toContain('Your role may not read keys here.');
  });
});
