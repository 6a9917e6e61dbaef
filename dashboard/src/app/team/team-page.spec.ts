import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import type { AuditEntry, Invitation, Member } from '../core/api-types';
import { AuthSession } from '../core/auth-session';
import { fakeSession } from '../shared/testing';
import { TeamPage } from './team-page';

const ORG = '/v1/organisations/org-1';
const OWNER_ACTIONS = [
  'organisation.read', 'members.read', 'members.manage', 'invitations.read', 'audit.read',
  'members.invite.owner', 'members.invite.maintainer', 'members.invite.developer', 'members.invite.viewer',
];

const members: Member[] = [
  { user: { id: 'u-dana', email: 'dana@tests.example', displayName: 'Dana Postdoc' }, role: 'owner', joinedAt: '2026-01-05T10:00:00Z' },
  { user: { id: 'u-lee', email: 'lee@tests.example', displayName: 'Lee Student' }, role: 'developer', joinedAt: '2026-01-06T10:00:00Z' },
];
const invitations: Invitation[] = [
  {
    id: 'inv-1', email: 'kim@tests.example', role: 'viewer', invitedBy: { id: 'u-dana', displayName: 'Dana Postdoc', email: 'dana@tests.example' },
    createdAt: '2026-01-07T10:00:00Z', expiresAt: '2026-01-14T10:00:00Z', state: 'pending',
  },
];
const audit: AuditEntry[] = [
  {
    id: 'a-1', createdAt: '2026-01-07T10:00:00Z', action: 'key.created', scope: 'organisation', organisationId: 'org-1',
    actor: { id: 'u-dana', displayName: 'Dana Postdoc', email: 'dana@tests.example' }, target: { type: 'key', id: 'ab12cd34' },
    details: { name: 'cluster runs' }, ip: '127.0.0.1',
  },
  {
    id: 'a-0', createdAt: '2026-01-06T10:00:00Z', action: 'member.joined', scope: 'organisation', organisationId: 'org-1',
    actor: { id: 'u-lee', displayName: 'Lee Student', email: 'lee@tests.example' }, target: { type: 'user', id: 'u-lee' },
    details: { role: 'developer' }, ip: '127.0.0.1',
  },
];

describe('TeamPage', () => {
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

  async function render(actions: string[]) {
    const fixture = TestBed.createComponent(TeamPage);
    fixture.detectChanges();
    backend.expectOne(`${ORG}/permissions`).flush({ role: 'owner', platformRole: null, actions });
    await vi.waitFor(() => backend.expectOne(`${ORG}/members`).flush({ items: members }));
    if (actions.includes('invitations.read')) backend.expectOne(`${ORG}/invitations`).flush({ items: invitations });
    if (actions.includes('audit.read')) {
      const log = await vi.waitFor(() => backend.expectOne((r) => r.url === `${ORG}/audit-log`));
      expect(log.request.params.get('limit')).toBe('25');
      log.flush({ items: audit, nextCursor: 'next-1' });
    }
    await fixture.whenStable();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  it('shows members with roles, open invitations and the audit log to an owner', async () => {
    const { page } = await render(OWNER_ACTIONS);
    expect(page.textContent).toContain('Dana Postdoc');
    expect(page.textContent).toContain('(you)');
    expect(page.textContent).toContain('lee@tests.example');
    expect(page.querySelectorAll('mat-select[aria-label^="Role of"]')).toHaveLength(2);
    expect(page.textContent).toContain('kim@tests.example');
    expect(page.textContent).toContain('key.created');
    expect(page.textContent).toContain('name: cluster runs');
    // a member as target by name, not by id; other targets by type and id
    const targets = [...page.querySelectorAll('.audit-table td.mat-column-target')].map((td) => td.textContent!.trim());
    expect(targets).toEqual(['key ab12cd34', 'Lee Student']);
    expect(page.querySelector('button[aria-label="Remove Lee Student"]')).not.toBeNull();
  });

  it('writes the audit log\'s and the invitations\' times in UTC, as its day filter counts them', async () => {
    // a browser far from UTC (the specs run in Node, whose local zone follows TZ): local times would read 5 h earlier
    const env = (globalThis as unknown as { process: { env: Record<string, string | undefined> } }).process.env;
    const tz = env['TZ'];
    env['TZ'] = 'America/New_York';
    try {
      const { page } = await render(OWNER_ACTIONS);
      const header = [...page.querySelectorAll('.audit-table th')].map((th) => th.textContent!.trim());
      expect(header[0]).toBe('When (UTC)');
      const when = [...page.querySelectorAll('.audit-table td.mat-column-createdAt')].map((td) => td.textContent!.trim());
      expect(when).toEqual(['7 Jan 2026, 10:00:00', '6 Jan 2026, 10:00:00']);
      expect(page.textContent).toContain('14 Jan 2026, 10:00');
    } finally {
      if (tz === undefined) delete env['TZ'];
      else env['TZ'] = tz;
    }
  });

  it('shows a viewer the members only, without controls', async () => {
    const { page } = await render(['organisation.read', 'members.read']);
    expect(page.textContent).toContain('Lee Student');
    expect(page.querySelector('mat-select')).toBeNull();
    expect(page.querySelector('button[aria-label^="Remove"]')).toBeNull();
    expect(page.textContent).not.toContain('Invitations');
    expect(page.textContent).not.toContain('Audit log');
  });

  it('invites by e-mail with a role', async () => {
    const { fixture, page } = await render(OWNER_ACTIONS);
    const email = page.querySelector('input[formcontrolname="email"]') as HTMLInputElement;
    email.value = 'sam@tests.example';
    email.dispatchEvent(new Event('input'));
    (Array.from(page.querySelectorAll('button')).find((b) => b.textContent?.includes('Send invitation')) as HTMLButtonElement).click();
    const request = backend.expectOne((r) => r.method === 'POST' && r.url === `${ORG}/invitations`);
    expect(request.request.body).toEqual({ email: 'sam@tests.example', role: 'developer' });
    request.flush({ ...invitations[0], id: 'inv-2', email: 'sam@tests.example', role: 'developer' });
    await vi.waitFor(() => expect(page.textContent).toContain('sam@tests.example'));
    // the audit log shows the invitation it recorded
    const log = backend.expectOne((r) => r.url === `${ORG}/audit-log`);
    expect(log.request.params.get('cursor')).toBeNull();
    log.flush({
      items: [{ ...audit[0]!, id: 'a-2', action: 'invitation.created', target: null, details: { email: 'sam@tests.example', role: 'developer' } }, ...audit],
      nextCursor: null,
    });
    await vi.waitFor(() => expect(page.textContent).toContain('invitation.created'));
    await fixture.whenStable();
    // the field is emptied for the next address without being shown as an error (the form was submitted)
    expect(email.value).toBe('');
    expect(page.querySelector('.invite-email mat-error')).toBeNull();
    expect(page.querySelector('.invite-email')?.classList.contains('mat-form-field-invalid')).toBe(false);
  });

  it('shows the last-owner rule from the server when a role change is refused', async () => {
    const { fixture, page } = await render(OWNER_ACTIONS);
    const component = fixture.componentInstance as unknown as { changeRole(m: Member, r: string): Promise<void> };
    const change = component.changeRole(members[0]!, 'viewer');
    backend.expectOne(`${ORG}/members/u-dana`).flush(
      { type: '/problems/last-owner', title: 'Last owner', status: 409, detail: 'An organisation needs at least one owner.' },
      { status: 409, statusText: 'Conflict' },
    );
    await change;
    await vi.waitFor(() => expect(document.querySelector('.cdk-overlay-container')?.textContent).toContain('An organisation needs at least one owner.'));
    expect(page.textContent).toContain('Dana Postdoc');
  });

  it('filters the audit log and pages through it with cursors', async () => {
    const { fixture, page } = await render(OWNER_ACTIONS);
    const older = Array.from(page.querySelectorAll('button')).find((b) => b.textContent?.trim() === 'Older') as HTMLButtonElement;
    older.click();
    const next = backend.expectOne((r) => r.url === `${ORG}/audit-log`);
    expect(next.request.params.get('cursor')).toBe('next-1');
    next.flush({ items: [], nextCursor: null });
    await fixture.whenStable();
    expect(page.textContent).toContain('No entries match.');
  });
});
