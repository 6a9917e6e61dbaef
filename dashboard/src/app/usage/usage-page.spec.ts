import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';

import { AuthSession } from '../core/auth-session';
import { fakeSession } from '../shared/testing';
import { UsageApi, type UsagePageData, type UsageRange } from './usage-api';
import { USAGE_DATE_PROVIDERS, UsagePage, lastDays, pickedDay, pickerDate } from './usage-page';
import type { GroupBy } from './usage-series';

/** ECharts needs a canvas, which jsdom lacks: a stand-in chart that records its options. */
const drawn: unknown[] = [];
const fakeEcharts = {
  init: () => ({
    setOption: (o: unknown) => drawn.push(o),
    resize: () => undefined,
    dispose: () => undefined,
    isDisposed: () => false,
    on: () => undefined,
    off: () => undefined,
    showLoading: () => undefined,
    hideLoading: () => undefined,
  }),
};

const today = lastDays(1).from;
const data = (overrides: Partial<UsagePageData> = {}): UsagePageData => ({
  from: `${lastDays(30).from}T00:00:00.000Z`,
  to: `${lastDays(30).to}T00:00:00.000Z`,
  grouped: [
    { start: `${today}T00:00:00.000Z`, group: 'hgdemo01', requests: 40, points: 1_000_000, errors: 1 },
    { start: `${today}T00:00:00.000Z`, group: 'hgdemo02', requests: 10, points: 2_000, errors: 3 },
  ],
  total: [{ start: `${today}T00:00:00.000Z`, group: null, requests: 50, points: 1_002_000, errors: 4, latencyP50Ms: 50, latencyP90Ms: 200, latencyP99Ms: 1000 }],
  quota: { plan: 'group', pointsUsed: 400_000_000, pointsQuota: 500_000_000, pointsLeft: 100_000_000, periodStart: '2026-12-01T00:00:00.000Z', periodEnd: '2027-01-01T00:00:00.000Z' },
  keys: [
    { id: 'hgdemo01', name: 'cluster runs', state: 'active' },
    { id: 'hgdemo02', name: 'notebook', state: 'active' },
  ],
  ...overrides,
});

// the first render compiles Material and the date adapter: generous on a busy two-core machine
describe('UsagePage', { timeout: 30_000 }, () => {
  let calls: Array<{ organisationId: string; range: UsageRange; groupBy: GroupBy }>;
  let csvCalls: Array<{ range: UsageRange; groupBy: GroupBy }>;
  let answer: () => Promise<UsagePageData>;

  beforeEach(() => {
    calls = [];
    csvCalls = [];
    drawn.length = 0;
    answer = async () => data();
    const api: Partial<UsageApi> = {
      page: (organisationId, range, groupBy) => {
        calls.push({ organisationId, range, groupBy });
        return answer();
      },
      csv: async (_organisationId, range, groupBy) => {
        csvCalls.push({ range, groupBy });
        return { fileName: 'usage-org-1.csv', text: 'start,group\r\n' };
      },
    };
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
        { provide: AuthSession, useValue: fakeSession().fake },
        { provide: UsageApi, useValue: api },
      ],
    });
    TestBed.overrideComponent(UsagePage, { set: { providers: [provideEchartsCore({ echarts: fakeEcharts }), USAGE_DATE_PROVIDERS] } });
  });

  async function render() {
    const fixture = TestBed.createComponent(UsagePage);
    fixture.detectChanges();
    await fixture.whenStable();
    fixture.detectChanges();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  const button = (root: ParentNode, text: string) => Array.from(root.querySelectorAll('button')).find((b) => b.textContent?.trim().includes(text)) as HTMLButtonElement;

  it('shows a loading state until the answer arrives', async () => {
    let release!: (d: UsagePageData) => void;
    answer = () => new Promise((resolve) => (release = resolve));
    const fixture = TestBed.createComponent(UsagePage);
    fixture.detectChanges();
    expect(fixture.nativeElement.textContent).toContain('Loading usage…');
    release(data());
    await fixture.whenStable();
    fixture.detectChanges();
    expect(fixture.nativeElement.textContent).not.toContain('Loading usage…');
  });

  it('asks for the last 30 days per key, and shows totals, quota and the day table', async () => {
    const { page } = await render();
    expect(calls[0]).toEqual({ organisationId: 'org-1', range: lastDays(30), groupBy: 'key' });
    const tiles = Array.from(page.querySelectorAll('.tile')).map((t) => [t.querySelector('.tile-label')!.textContent!.trim(), t.querySelector('.tile-value')!.textContent!.trim()]);
    expect(tiles).toEqual([['Points', '1,002,000'], ['Requests', '50'], ['Errors', '4 (8%)']]);
    const quota = page.querySelector('.quota')!.textContent!.replace(/\s+/g, ' ');
    expect(quota).toContain('400,000,000 of 500,000,000 points used (80%) on the Group plan; 100,000,000 left');
    expect(page.querySelector('mat-progress-bar')!.classList).toContain('warn');
    expect(page.querySelectorAll('.usage-table tbody tr').length).toBe(30);
    expect(page.querySelector('.usage-table tbody tr:last-child')!.textContent).toContain(today);
    expect(page.querySelectorAll('[echarts]').length).toBe(3);
  });

  it('writes the days in the range field as "3 Nov 2026", not as the ambiguous 11/3/2026', async () => {
    const { page } = await render();
    const start = page.querySelector('input[aria-label="First day"]') as HTMLInputElement;
    const end = page.querySelector('input[aria-label="Last day"]') as HTMLInputElement;
    for (const [input, day] of [[start, lastDays(30).from], [end, today]] as const) {
      expect(input.value).toMatch(/^\d{1,2} [A-Z][a-z]{2,3} \d{4}$/);
      expect(input.value).not.toContain('/');
      expect(pickedDay(new Date(Date.parse(input.value)))).toBe(day);
    }
  });

  it('names keys in the legend and switches to per endpoint', async () => {
    const { fixture, page } = await render();
    const component = fixture.componentInstance as unknown as { pointsOptions: () => { series: Array<{ name: string }> } };
    expect(component.pointsOptions().series.map((s) => s.name)).toEqual(['cluster runs (hgdemo01)', 'notebook (hgdemo02)', 'Running total this period']);
    (page.querySelectorAll('mat-button-toggle button')[1] as HTMLButtonElement).click();
    await fixture.whenStable();
    expect(calls.at(-1)?.groupBy).toBe('endpoint');
  });

  it('changes the range with a preset and with the date range fields', async () => {
    const { fixture, page } = await render();
    button(page, 'Last 7 days').click();
    await fixture.whenStable();
    expect(calls.at(-1)?.range).toEqual(lastDays(7));
    const component = fixture.componentInstance as unknown as { rangeForm: { setValue(v: unknown): void }; applyPickedRange(): void; rangeError(): string };
    component.rangeForm.setValue({ start: pickerDate('2026-10-01'), end: pickerDate('2026-10-31') });
    component.applyPickedRange();
    await fixture.whenStable();
    expect(calls.at(-1)?.range).toEqual({ from: '2026-10-01', to: '2026-11-01' });
    component.rangeForm.setValue({ start: pickerDate('2026-10-05'), end: pickerDate('2026-10-01') });
    component.applyPickedRange();
    expect(component.rangeError()).toBe('The first day must not be after the last.');
    expect(pickedDay(pickerDate('2026-02-28'))).toBe('2026-02-28');
  });

  it('exports the same range and split as the charts show', async () => {
    const { fixture, page } = await render();
    const created: Blob[] = [];
    const createObjectURL = URL.createObjectURL;
    const revokeObjectURL = URL.revokeObjectURL;
    URL.createObjectURL = (blob: Blob) => (created.push(blob), 'blob:usage');
    URL.revokeObjectURL = () => undefined;
    const clicks: string[] = [];
    const click = HTMLAnchorElement.prototype.click;
    HTMLAnchorElement.prototype.click = function (this: HTMLAnchorElement) {
      clicks.push(this.download);
    };
    try {
      (page.querySelectorAll('mat-button-toggle button')[1] as HTMLButtonElement).click();
      await fixture.whenStable();
      button(page, 'Export CSV').click();
      await fixture.whenStable();
      expect(csvCalls).toEqual([{ range: lastDays(30), groupBy: 'endpoint' }]);
      expect(clicks).toEqual(['usage-org-1.csv']);
      expect(await created[0].text()).toBe('start,group\r\n');
    } finally {
      URL.createObjectURL = createObjectURL;
      URL.revokeObjectURL = revokeObjectURL;
      HTMLAnchorElement.prototype.click = click;
    }
  });

  it('says so when the range holds no requests', async () => {
    answer = async () => data({ grouped: [], total: [] });
    const { page } = await render();
    expect(page.textContent).toContain('No requests in these days.');
    expect(page.querySelectorAll('[echarts]').length).toBe(0);
  });

  it('shows the error and offers to try again', async () => {
    answer = async () => {
      throw new Error('boom');
    };
    const { fixture, page } = await render();
    expect(page.querySelector('[role=alert]')!.textContent).toContain('Usage could not be loaded');
    answer = async () => data();
    button(page, 'Try again').click();
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.querySelector('.tiles')).not.toBeNull();
  });
});
