import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';

import { AuthSession } from '../core/auth-session';
import { TEST_USER, fakeSession } from '../shared/testing';
import { dayOf } from '../usage/usage-series';
import { OverviewApi, type OverviewData, type RecentJobs } from './overview-api';
import { OverviewPage, warningsFor } from './overview-page';

const fakeEcharts = {
  init: () => ({ setOption: () => undefined, resize: () => undefined, dispose: () => undefined, isDisposed: () => false, on: () => undefined, off: () => undefined, showLoading: () => undefined, hideLoading: () => undefined }),
};

const NOW = Date.parse('2026-12-10T12:00:00Z');

function overview(pointsUsed: number, week: OverviewData['week']['buckets'] = [], now = NOW): OverviewData {
  const start = new Date(now);
  const periodStart = new Date(Date.UTC(start.getUTCFullYear(), start.getUTCMonth(), 1)).toISOString();
  const periodEnd = new Date(Date.UTC(start.getUTCFullYear(), start.getUTCMonth() + 1, 1)).toISOString();
  return {
    organisation: { id: 'org-1', name: 'Merger group', plan: 'free', keys: [{ id: 'abcd1234', name: 'notebook', state: 'active' }] },
    period: {
      buckets: [{ start: `${dayOf(now)}T00:00:00.000Z`, group: null, requests: 10, points: pointsUsed, errors: 0 }],
      quota: { plan: 'free', pointsUsed, pointsQuota: 2_000_000, pointsLeft: Math.max(0, 2_000_000 - pointsUsed), periodStart, periodEnd },
    },
    week: { buckets: week },
  };
}

describe('Overview warnings', () => {
  it('warns near the quota (80 %) and when the pace runs it out before the period ends', () => {
    // 1 700 000 of 2 000 000 on day 10: 85 %, and at 170 000 a day the quota is gone on day 12.
    const w = warningsFor(overview(1_700_000), NOW);
    expect(w.map((x) => x.kind)).toEqual(['quota', 'pace']);
    expect(w[0].text).toBe('85 % of this period’s quota is used; 300,000 points are left.');
    expect(w[1].text).toBe('At this period’s pace the quota runs out on 2026-12-12, before the period ends.');
  });

  it('says when the quota is used up', () => {
    const w = warningsFor(overview(2_000_000), NOW);
    expect(w.map((x) => x.kind)).toEqual(['quota']);
    expect(w[0].text).toContain('used up');
  });

  it('names failing keys of the last seven days', () => {
    const w = warningsFor(overview(1_000, [{ start: '2026-12-08T00:00:00.000Z', group: 'abcd1234', requests: 60, points: 0, errors: 15 }]), NOW);
    expect(w).toEqual([
      { kind: 'failing-key', text: 'Key “notebook” (abcd1234): 15 of 60 requests failed in the last 7 days (25.0 %).', link: '/usage', linkText: 'See errors' },
    ]);
  });

  it('stays quiet when all is well', () => {
    expect(warningsFor(overview(10_000), NOW)).toEqual([]);
  });
});

describe('OverviewPage', { timeout: 30_000 }, () => {
  let data: () => Promise<OverviewData>;
  let jobs: () => Promise<RecentJobs>;

  beforeEach(() => {
    data = async () => overview(10_000, [], Date.now());
    jobs = async () => ({ available: true, items: [] });
    const api: Partial<OverviewApi> = { overview: () => data(), recentJobs: () => jobs() };
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
        { provide: AuthSession, useValue: fakeSession().fake },
        { provide: OverviewApi, useValue: api },
      ],
    });
    TestBed.overrideComponent(OverviewPage, { set: { providers: [provideEchartsCore({ echarts: fakeEcharts })] } });
  });

  async function render() {
    const fixture = TestBed.createComponent(OverviewPage);
    fixture.detectChanges();
    await fixture.whenStable();
    fixture.detectChanges();
    return fixture.nativeElement as HTMLElement;
  }

  it('shows the plan, quota, burn-down, the week and an honest empty jobs list', async () => {
    const page = await render();
    expect(page.querySelector('#plan-heading')!.textContent).toBe('Free plan');
    expect(page.querySelector('.plan .big')!.textContent).toContain('10,000');
    expect(page.textContent).toContain('Nothing needs attention');
    expect(page.querySelectorAll('[echarts]').length).toBe(1); // the week is empty: no second chart
    expect(page.textContent).toContain('No points evaluated in the last seven days.');
    expect(page.textContent).toContain('No jobs yet.');
  });

  it('says when this server has no jobs API', async () => {
    jobs = async () => ({ available: false });
    const page = await render();
    expect(page.textContent).toContain('Batch jobs and table builds are not available on this server yet.');
  });

  it('lists recent jobs', async () => {
    jobs = async () => ({
      available: true,
      items: [{ id: 'j1', kind: 'TABLE', name: 'He-detonation grid', state: 'completed', points: 152_021, progress: 1, createdAt: '2026-12-01T10:00:00Z', finishedAt: '2026-12-01T10:05:00Z' }],
    });
    const page = await render();
    const item = page.querySelector('.job-list li')!.textContent!;
    expect(item).toContain('He-detonation grid');
    expect(item).toContain('completed');
    expect(item).toContain('152,021 nodes');
  });

  it('without an organisation (an operator), says so instead of loading forever', async () => {
    const operator = { ...TEST_USER, platformRole: 'operator' as const };
    TestBed.overrideProvider(AuthSession, { useValue: fakeSession(operator, []).fake });
    const page = await render();
    expect(page.textContent).toContain('No organisation is chosen.');
    expect(page.querySelector('a[href="/operator"]')).not.toBeNull();
    expect(page.textContent).not.toContain('Loading the overview');
  });

  it('shows loading, then an error with a retry', async () => {
    let fail!: (e: Error) => void;
    data = () => new Promise((_, reject) => (fail = reject));
    const fixture = TestBed.createComponent(OverviewPage);
    fixture.detectChanges();
    expect(fixture.nativeElement.textContent).toContain('Loading the overview…');
    fail(new Error('offline'));
    await fixture.whenStable();
    fixture.detectChanges();
    expect(fixture.nativeElement.querySelector('[role=alert]').textContent).toContain('The overview could not be loaded');
  });
});
