import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import { OperatorApi, type LimitsChange, type OperatorHealth, type OperatorOrganisation, type OperatorOverview } from './operator-api';
import { changeFromForm, limitsForm } from './operator-limits-dialog';
import { OperatorPage, metricRows } from './operator-page';

const FREE = { pointsPerMonth: 2_000_000, requestsPerSecond: 10, maxBatch: 10_000, tableBuildsPerMonth: 1 };

function org(overrides: Partial<OperatorOrganisation> = {}): OperatorOrganisation {
  return {
    id: 'org-1',
    name: 'Merger group',
    slug: 'merger-group',
    createdAt: '2026-01-05T10:00:00Z',
    plan: 'free',
    planName: 'Free',
    memberCount: 3,
    activeKeyCount: 2,
    limits: FREE,
    planLimits: FREE,
    override: null,
    usage: { points: 1_700_000, requests: 900, errors: 12, quotaFraction: 0.85, recentRequests: 40, recentErrors: 10 },
    ...overrides,
  };
}

const HEALTH: OperatorHealth = {
  checkedAt: '2026-12-02T10:00:00Z',
  ready: true,
  checks: [
    { name: 'database', ok: true, detail: null },
    { name: 'migrations', ok: false, detail: 'pending: 008_next' },
  ],
  instance: { uptimeSeconds: 7_200, httpRequests: 1234, httpServerErrors: 0, httpMeanSeconds: 0.0123, pointsEvaluated: 5_600_000, poolThreads: 2, poolQueueDepth: 0, poolUtilization: 0.25, dbConnectionsUsed: 1, dbConnectionsPending: 0, meteringFlushLagSeconds: 0.4, residentMemoryBytes: 209_715_200, eventLoopLagP99Seconds: null },
  platform: { organisations: 2, users: 7, activeKeys: 3, pointsThisPeriod: 1_700_010, requestsThisPeriod: 901, errorsThisPeriod: 12, periodStart: '2026-12-01T00:00:00Z' },
};

describe('Operator limits form', () => {
  it('sends empty fields as the plan value and "unlimited" as the flag', () => {
    const form = limitsForm(org());
    form.patchValue({ plan: 'group', pointsPerMonth: 50_000_000, tableBuildsPerMonth: 4, tableBuildsUnlimited: true, reason: '  Summer school  ' });
    expect(changeFromForm(form.getRawValue())).toEqual({
      plan: 'group',
      overrides: { pointsPerMonth: 50_000_000, requestsPerSecond: null, maxBatch: null, tableBuildsPerMonth: null, tableBuildsUnlimited: true },
      reason: 'Summer school',
    });
  });

  it('starts from the current override and refuses bad values', () => {
    const form = limitsForm(org({ override: { pointsPerMonth: 3_000_000, requestsPerSecond: null, maxBatch: 20_000, tableBuildsPerMonth: null, tableBuildsUnlimited: false, reason: 'pilot', setByEmail: 'op@tests.example', updatedAt: '2026-12-01T00:00:00Z' } }));
    expect(form.controls.pointsPerMonth.value).toBe(3_000_000);
    expect(form.controls.maxBatch.value).toBe(20_000);
    expect(form.controls.reason.valid).toBe(false);
    form.controls.requestsPerSecond.setValue(0);
    expect(form.controls.requestsPerSecond.valid).toBe(false);
    form.controls.requestsPerSecond.setValue(2.5);
    expect(form.controls.requestsPerSecond.valid).toBe(false);
    form.controls.requestsPerSecond.setValue(250);
    form.controls.reason.setValue('Agreed with the group lead');
    expect(form.valid).toBe(true);
  });

  it('writes the instance metrics it has, skipping those not measured', () => {
    const rows = metricRows(HEALTH);
    expect(rows.find((r) => r.label === 'Uptime')?.value).toBe('2.0 h');
    expect(rows.find((r) => r.label === 'Mean response time')?.value).toBe('12.3 ms');
    expect(rows.find((r) => r.label === 'Memory (resident)')?.value).toBe('200 MiB');
    expect(rows.some((r) => r.label === 'Event-loop lag p99')).toBe(false);
  });
});

describe('OperatorPage', { timeout: 30_000 }, () => {
  let answer: () => Promise<OperatorOverview>;
  let saved: Array<{ id: string; change: LimitsChange }>;

  beforeEach(() => {
    saved = [];
    answer = async () => ({ periodStart: '2026-12-01T00:00:00Z', periodEnd: '2027-01-01T00:00:00Z', organisations: [org(), org({ id: 'org-2', name: 'Nova lab', slug: 'nova-lab', usage: { ...org().usage, quotaFraction: 0.1, recentErrors: 0 } })], health: HEALTH });
    const api: Partial<OperatorApi> = {
      overview: () => answer(),
      setLimits: async (id, change) => {
        saved.push({ id, change });
        return org({ plan: 'group', planName: 'Group', limits: { ...FREE, pointsPerMonth: 500_000_000 } });
      },
    };
    TestBed.configureTestingModule({
      providers: [provideRouter([]), { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } }, { provide: OperatorApi, useValue: api }],
    });
  });

  afterEach(() => document.querySelectorAll('.cdk-overlay-container').forEach((el) => (el.innerHTML = '')));

  async function render() {
    const fixture = TestBed.createComponent(OperatorPage);
    fixture.detectChanges();
    await fixture.whenStable();
    fixture.detectChanges();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  it('lists organisations with plan, limits and use, marks failing ones, and shows health', async () => {
    const { page } = await render();
    const rows = page.querySelectorAll('table.orgs tbody tr');
    expect(rows.length).toBe(2);
    expect(rows[0].textContent).toContain('Merger group');
    expect(rows[0].textContent).toContain('2,000,000 pts/month');
    expect(rows[0].textContent).toContain('1,700,000');
    expect(rows[0].querySelector('td.bad')?.textContent).toContain('10 of 40');
    expect(rows[1].querySelector('td.bad')).toBeNull();
    expect(page.querySelector('.ready')!.textContent).toBe('Ready');
    expect(page.querySelector('.checks .bad')!.textContent).toContain('pending: 008_next');
  });

  it('filters organisations', async () => {
    const { fixture, page } = await render();
    const input = page.querySelector('input') as HTMLInputElement;
    input.value = 'nova';
    input.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    expect(page.querySelectorAll('table.orgs tbody tr').length).toBe(1);
    input.value = 'nothing like it';
    input.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    expect(page.textContent).toContain('No organisation matches the filter.');
  });

  it('changes limits through the dialog and shows the answer', async () => {
    const { fixture, page } = await render();
    (page.querySelector('tr[data-organisation-id="org-1"] button') as HTMLButtonElement).click();
    await fixture.whenStable();
    const dialog = document.querySelector('.cdk-overlay-container mat-dialog-container') as HTMLElement;
    expect(dialog.textContent).toContain('Limits of Merger group');
    const save = () => Array.from(dialog.querySelectorAll('button')).find((b) => b.textContent?.includes('Save limits'))!;
    save().click(); // no reason yet: nothing sent
    await fixture.whenStable();
    expect(saved).toEqual([]);
    const reason = dialog.querySelector('textarea') as HTMLTextAreaElement;
    reason.value = 'Workshop pilot';
    reason.dispatchEvent(new Event('input'));
    const points = dialog.querySelector('input[formcontrolname="pointsPerMonth"]') as HTMLInputElement;
    points.value = '5000000';
    points.dispatchEvent(new Event('input'));
    save().click();
    await fixture.whenStable();
    expect(saved).toEqual([{ id: 'org-1', change: { plan: 'free', overrides: { pointsPerMonth: 5_000_000, requestsPerSecond: null, maxBatch: null, tableBuildsPerMonth: null, tableBuildsUnlimited: false }, reason: 'Workshop pilot' } }]);
    fixture.detectChanges();
    expect(page.querySelector('tr[data-organisation-id="org-1"]')!.textContent).toContain('500,000,000 pts/month');
  });

  it('shows an error with a retry', async () => {
    answer = async () => {
      throw new Error('down');
    };
    const { page } = await render();
    expect(page.querySelector('[role=alert]')!.textContent).toContain('could not be loaded');
  });
});
