import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import { fakeSession } from '../shared/testing';
import type { Job } from './jobs-api';
import { JobsPage, formatDuration, formatError, warningSummary } from './jobs-page';

const PERMISSIONS = '/v1/organisations/org-1/permissions';
const DEVELOPER_ACTIONS = ['jobs.read', 'jobs.create'];

function job(overrides: Partial<Job> = {}): Job {
  return {
    id: 'j-1',
    kind: 'batch',
    name: 'shell-states.csv',
    state: 'running',
    createdBy: 'u-dana',
    points: 20000,
    pointsDone: 5000,
    chunksTotal: 4,
    chunksDone: 1,
    progress: 0.25,
    pointsPerSecond: 2500,
    etaSeconds: 6,
    createdAt: '2026-03-01T10:00:00Z',
    startedAt: '2026-03-01T10:00:01Z',
    finishedAt: null,
    error: null,
    request: {},
    result: null,
    files: {},
    ...overrides,
  };
}

const FILE = { fileName: 'x-results.csv', contentType: 'text/csv', sizeBytes: 10, sha256: 'ab'.repeat(32), url: '/v1/jobs/j-2/results?format=csv' };

describe('JobsPage', () => {
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

  async function render(jobs: Job[], tables: Job[] = [], actions = DEVELOPER_ACTIONS) {
    const fixture = TestBed.createComponent(JobsPage);
    fixture.detectChanges();
    backend.expectOne('/v1/jobs').flush({ items: jobs });
    backend.expectOne('/v1/tables').flush({ items: tables });
    backend.expectOne(PERMISSIONS).flush({ role: 'developer', platformRole: null, actions });
    await fixture.whenStable();
    fixture.detectChanges();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  it('shows the loading state, then the empty states', async () => {
    const fixture = TestBed.createComponent(JobsPage);
    fixture.detectChanges();
    expect(fixture.nativeElement.textContent).toContain('Loading jobs');
    backend.expectOne('/v1/jobs').flush({ items: [] });
    backend.expectOne('/v1/tables').flush({ items: [] });
    backend.expectOne(PERMISSIONS).flush({ role: 'developer', platformRole: null, actions: DEVELOPER_ACTIONS });
    await fixture.whenStable();
    fixture.detectChanges();
    expect(fixture.nativeElement.textContent).toContain('No batch jobs yet');
    expect(fixture.nativeElement.textContent).toContain('No table builds yet');
  });

  it('shows an error with a retry', async () => {
    const fixture = TestBed.createComponent(JobsPage);
    fixture.detectChanges();
    backend.expectOne('/v1/jobs').flush({ type: '/problems/internal', title: 'Internal error', status: 500, detail: 'The request failed on our side.' }, { status: 500, statusText: 'Error' });
    backend.match('/v1/tables');
    backend.match(PERMISSIONS);
    await fixture.whenStable();
    fixture.detectChanges();
    expect(fixture.nativeElement.querySelector('[role="alert"]').textContent).toContain('The request failed on our side.');
  });

  it('shows live progress of a running job: chunks, points per second and time left', async () => {
    const { page } = await render([job()]);
    const text = page.querySelector('.job')!.textContent!;
    expect(text).toContain('1 of 4 chunks');
    expect(text).toContain('2,500 points/s');
    expect(text).toContain('about 6 s left');
    expect(page.querySelector('mat-progress-bar')).not.toBeNull();
  });

  it('uploads a file with its composition and lists the new job', async () => {
    const { fixture, page } = await render([]);
    const input = page.querySelector<HTMLInputElement>('[data-testid="job-file"]')!;
    const file = new File(['density,temperature\n1,1e6\n'], 'states.csv', { type: 'text/csv' });
    Object.defineProperty(input, 'files', { value: [file] });
    input.dispatchEvent(new Event('change'));
    fixture.detectChanges();
    page.querySelector<HTMLButtonElement>('button.submit-job')!.click();
    const req = backend.expectOne((r) => r.method === 'POST' && r.url === '/v1/jobs');
    const body = req.request.body as FormData;
    expect((body.get('file') as File).name).toBe('states.csv');
    expect(body.get('composition')).toBe('{"mixture":"c12-o16"}');
    expect(body.get('method')).toBe('exact');
    req.flush(job({ id: 'j-9', name: 'states.csv', state: 'queued', chunksDone: 0, pointsPerSecond: null, etaSeconds: null }));
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.querySelector('.job-name')!.textContent).toContain('states.csv');
    expect(page.querySelector('.job')!.textContent).toContain('waiting for a worker');
  });

  it('lists a refused upload\'s problems with their line numbers', async () => {
    const { fixture, page } = await render([]);
    const input = page.querySelector<HTMLInputElement>('[data-testid="job-file"]')!;
    Object.defineProperty(input, 'files', { value: [new File(['x'], 'bad.csv')] });
    input.dispatchEvent(new Event('change'));
    fixture.detectChanges();
    page.querySelector<HTMLButtonElement>('button.submit-job')!.click();
    backend.expectOne('/v1/jobs').flush(
      {
        type: '/problems/invalid-upload',
        title: 'Upload refused',
        status: 422,
        detail: 'The upload has problems; nothing was queued.',
        errors: [{ line: 4, column: 'temperature', value: 'hot', message: '"hot" is not a number' }],
      },
      { status: 422, statusText: 'Unprocessable' },
    );
    await fixture.whenStable();
    fixture.detectChanges();
    const alert = page.querySelector('.upload-problem')!.textContent!;
    expect(alert).toContain('nothing was queued');
    expect(alert).toContain('line 4, temperature');
    expect(alert).toContain('"hot" is not a number');
  });

  it('cancels your own running job', async () => {
    const { fixture, page } = await render([job()]);
    page.querySelector<HTMLButtonElement>('button.cancel')!.click();
    const req = backend.expectOne('/v1/jobs/j-1/cancel');
    expect(req.request.method).toBe('POST');
    req.flush(job({ state: 'cancelled' }));
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.querySelector('.state')!.textContent).toContain('cancelled');
    expect(page.querySelector('button.cancel')).toBeNull();
  });

  it('a viewer sees no upload form and no cancel button', async () => {
    const { page } = await render([job({ createdBy: 'someone-else' })], [], ['jobs.read']);
    expect(page.querySelector('button.submit-job')).toBeNull();
    expect(page.querySelector('button.cancel')).toBeNull();
    expect(page.textContent).toContain('Your role can follow jobs');
  });

  it('says how many states of a finished job carry physics warnings, and which', async () => {
    const finished = (id: string, result: Job['result']) => job({ id, state: 'completed', points: 3, pointsDone: 3, chunksDone: 4, progress: 1, pointsPerSecond: 0.3, etaSeconds: null, result });
    const { page } = await render([
      finished('j-w', { statusCounts: { '0': 3 }, computed: 3, warned: 2, warningCounts: { PARTIAL_IONIZATION: 1, NON_POSITIVE_PRESSURE: 2 } }),
      finished('j-0', { statusCounts: { '0': 3 }, computed: 3, warned: 0, warningCounts: {} }),
      finished('j-old', { statusCounts: { '0': 3 }, computed: 3, warned: null, warningCounts: null }),
    ]);
    const [warned, clean, old] = [...page.querySelectorAll('.job')].map((li) => li.textContent!);
    expect(warned).toContain('Physics warnings on 2 of 3 states: NON_POSITIVE_PRESSURE 2, PARTIAL_IONIZATION 1.');
    expect(page.querySelector('.job-warnings.warned')).not.toBeNull();
    expect(warned).toContain('0.3 points/s');
    expect(clean).toContain('No physics warnings.');
    expect(old).toContain('Physics warnings were not recorded for this job.');
  });

  it('offers the results of a finished job for download', async () => {
    const { page } = await render([job({ id: 'j-2', state: 'completed', files: { csv: FILE } })]);
    const button = [...page.querySelectorAll<HTMLButtonElement>('.job-actions button')].find((b) => b.textContent!.includes('CSV'))!;
    button.click();
    const req = backend.expectOne(FILE.url);
    expect(req.request.responseType).toBe('blob');
  });

  it('requests a table build for the grid and shows a build\'s accuracy report', async () => {
    const built = job({
      id: 't-1',
      kind: 'table',
      name: 'grid',
      state: 'completed',
      points: 441,
      progress: 1,
      files: { table: { ...FILE, fileName: 'grid.h5', url: '/v1/tables/t-1/file' } },
      result: {
        accuracy: {
          maxRelativeError: 3.2e-7,
          medianRelativeError: 1e-11,
          maxwellMax: 1e-9,
          cellCentres: 400,
          randomPoints: 500,
          quantities: { pressure: { max: 3.2e-7, median: 1e-11, p99: 2e-8 } },
        },
      },
    });
    const { fixture, page } = await render([], [built]);
    expect(page.querySelector('.accuracy')!.textContent).toContain('3.2e-7');
    page.querySelector<HTMLButtonElement>('.accuracy button')!.click();
    fixture.detectChanges();
    expect(page.querySelector('.accuracy-table')!.textContent).toContain('pressure');

    page.querySelector<HTMLButtonElement>('button.request-table')!.click();
    const req = backend.expectOne((r) => r.method === 'POST' && r.url === '/v1/tables');
    expect(req.request.body).toEqual({ grid: { logDensityYeMin: 4, logDensityYeMax: 8, logTemperatureMin: 7, logTemperatureMax: 10, pointsPerDecade: 20 } });
    req.flush(job({ id: 't-2', kind: 'table', name: 'new grid', state: 'queued', progress: 0 }));
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.querySelectorAll('.table-build').length).toBe(2);
  });

  it('counts the nodes a build will have, with the denser T band over the pair onset', async () => {
    const { fixture, page } = await render([]);
    const set = (label: string, value: string) => {
      const field = Array.from(page.querySelectorAll('form.grid-form mat-form-field')).find((f) => f.textContent?.includes(label))!;
      const input = field.querySelector('input') as HTMLInputElement;
      input.value = value;
      input.dispatchEvent(new Event('input'));
    };
    // ρYe 10^4–10^7 at 4 per decade: 13 nodes; T 10^8–10^9.5 lies in the band (60 per decade): 91 nodes
    for (const [label, value] of [['ρYe min', '4'], ['ρYe max', '7'], ['T min', '8'], ['T max', '9.5'], ['Points per decade', '4']]) set(label, value);
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.textContent).toContain('≈ 1,183 nodes');
    expect(page.textContent).toContain('at least 60 points per decade');
    // below the onset the axis stays uniform: T 10^3–10^7 at 4 per decade, 17 nodes
    set('T min', '3');
    set('T max', '7');
    await fixture.whenStable();
    fixture.detectChanges();
    expect(page.textContent).toContain('≈ 221 nodes');
    expect(page.textContent).not.toContain('at least 60 points per decade');
  });
});

describe('jobs page formatting', () => {
  it('durations and relative errors', () => {
    expect(formatDuration(42)).toBe('42 s');
    expect(formatDuration(600)).toBe('10 min');
    expect(formatDuration(null)).toBe('—');
    expect(formatError(3.2e-7)).toBe('3.2e-7');
    expect(formatError(null)).toBe('—');
  });

  it('a warning summary counts states, not flags', () => {
    const result = { warned: 1, warningCounts: { PARTIAL_IONIZATION: 1, CRYSTALLIZED: 1, MECHANICALLY_UNSTABLE: 1 } };
    const done = { id: 'j', kind: 'batch', name: 'x', state: 'completed', points: 12000, result } as unknown as Job;
    expect(warningSummary(done)).toMatch(/^Physics warnings on 1 of 12,000 states: /);
  });

});
