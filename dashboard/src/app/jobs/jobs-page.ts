import { DatePipe, DecimalPipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, DestroyRef, PendingTasks, computed, effect, inject, signal, untracked } from '@angular/core';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltip } from '@angular/material/tooltip';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { AuthSession } from '../core/auth-session';
import { asProblem, problemMessage } from '../core/problem';
import { ACTIVE_STATES, BUILTIN_MIXTURES, type Job, type JobFile, JobsApi, type TableGridRequest } from './jobs-api';

/** The builder's denser T band over the pair onset (eos/free-energy-table.ts PAIR_ONSET_BAND). */
const PAIR_ONSET = { min: 8, max: 10, perDecade: 60 } as const;
/** How often the page asks again while a job or build is queued or running. */
const POLL_MS = 2000;

/** One problem of a refused upload, as the gateway lists it (line for CSV, index for HDF5). */
export interface UploadIssue {
  readonly where: string;
  readonly message: string;
}

/** Seconds as "42 s", "3 min", "1.5 h". */
export function formatDuration(seconds: number | null): string {
  if (seconds === null || !Number.isFinite(seconds)) return '—';
  if (seconds < 90) return `${Math.max(1, Math.round(seconds))} s`;
  if (seconds < 5400) return `${Math.round(seconds / 60)} min`;
  return `${(seconds / 3600).toFixed(1)} h`;
}

/** A relative error for people: 3.2e-7, or "—". */
export function formatError(x: number | null | undefined): string {
  return typeof x === 'number' && Number.isFinite(x) ? x.toExponential(1) : '—';
}

/**
 * What a finished batch's summary says about physics warnings (its `warned` and `warningCounts`):
 * "Physics warnings on 2 of 3 states: PARTIAL_IONIZATION 2, …", "No physics warnings.", or, for a
 * job finished before warnings were recorded (both null), that they were not recorded.
 */
export function warningSummary(job: Job): string {
  const warned = job.result?.['warned'];
  if (typeof warned !== 'number') return 'Physics warnings were not recorded for this job.';
  if (warned === 0) return 'No physics warnings.';
  const counts = (job.result?.['warningCounts'] ?? {}) as Readonly<Record<string, number>>;
  const names = Object.entries(counts)
    .sort(([, a], [, b]) => b - a)
    .map(([name, n]) => `${name} ${n.toLocaleString('en')}`);
  return `Physics warnings on ${warned.toLocaleString('en')} of ${job.points.toLocaleString('en')} states${names.length ? `: ${names.join(', ')}` : ''}. Check the warningFlags column before using those values.`;
}

/** The Jobs page (DESIGN.md §7): batch uploads with live progress, and table builds with their accuracy report. */
@Component({
  selector: 'fw-jobs-page',
  imports: [DatePipe, DecimalPipe, MatButton, MatIconButton, MatFormField, MatHint, MatLabel, MatIcon, MatInput, MatOption, MatProgressBar, MatProgressSpinner, MatSelect, MatTooltip],
  templateUrl: './jobs-page.html',
  styleUrl: './jobs-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class JobsPage {
  private readonly session = inject(AuthSession);
  private readonly jobsApi = inject(JobsApi);
  private readonly api = inject(ApiClient);
  private readonly snackBar = inject(MatSnackBar);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly mixtures = BUILTIN_MIXTURES;
  protected readonly formatDuration = formatDuration;
  protected readonly formatError = formatError;
  protected readonly warningSummary = warningSummary;

  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly jobs = signal<readonly Job[]>([]);
  protected readonly tables = signal<readonly Job[]>([]);
  protected readonly actions = signal<readonly string[]>([]);
  protected readonly busy = signal<string | null>(null);

  // upload form
  protected readonly file = signal<File | null>(null);
  protected readonly jobName = signal('');
  protected readonly composition = signal<string>('c12-o16');
  protected readonly abar = signal(12);
  protected readonly zbar = signal(6);
  protected readonly method = signal<'exact' | 'table'>('exact');
  protected readonly uploading = signal(false);
  protected readonly uploadError = signal('');
  protected readonly uploadIssues = signal<readonly UploadIssue[]>([]);

  // table-build form (bounds in log10 ρYe [g/cm³] and log10 T [K])
  protected readonly grid = signal<TableGridRequest>({ logDensityYeMin: 4, logDensityYeMax: 8, logTemperatureMin: 7, logTemperatureMax: 10, pointsPerDecade: 20 });
  protected readonly tableMixture = signal<string>('');
  protected readonly tableName = signal('');
  protected readonly requesting = signal(false);
  protected readonly tableError = signal('');
  protected readonly expanded = signal<string | null>(null);

  protected readonly canCreate = computed(() => this.actions().includes('jobs.create'));
  protected readonly canManage = computed(() => this.actions().includes('jobs.manage'));
  protected readonly anyActive = computed(() => [...this.jobs(), ...this.tables()].some((j) => ACTIVE_STATES.includes(j.state)));
  /**
   * Nodes the build will have: the builder adds a denser T band over the pair onset (log₁₀T 8–10 at
   * 60 per decade, eos/free-energy-table.ts PAIR_ONSET_BAND) where the grid crosses it, for accuracy.
   */
  protected readonly gridNodes = computed(() => {
    const g = this.grid();
    const ppd = g.pointsPerDecade;
    const inBand = Math.max(0, Math.min(g.logTemperatureMax, PAIR_ONSET.max) - Math.max(g.logTemperatureMin, PAIR_ONSET.min));
    const tNodes = Math.round((g.logTemperatureMax - g.logTemperatureMin - inBand) * ppd + inBand * Math.max(ppd, PAIR_ONSET.perDecade)) + 1;
    return (Math.round((g.logDensityYeMax - g.logDensityYeMin) * ppd) + 1) * tNodes;
  });
  protected readonly inPairOnset = computed(() => this.grid().logTemperatureMax > PAIR_ONSET.min && this.grid().logTemperatureMin < PAIR_ONSET.max);

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
    // live progress: poll while something is queued or running
    const timer = setInterval(() => {
      if (this.anyActive() && !this.loading()) void this.refresh();
    }, POLL_MS);
    inject(DestroyRef).onDestroy(() => clearInterval(timer));
  }

  protected isActive(job: Job): boolean {
    return ACTIVE_STATES.includes(job.state);
  }

  /** Your own job: jobs.create; anyone's: jobs.manage (the server decides in the end). */
  protected canCancel(job: Job): boolean {
    if (!this.isActive(job)) return false;
    return this.canManage() || (this.canCreate() && job.createdBy === this.session.user()?.id);
  }

  protected quantities(job: Job): { name: string; max: number | null; median: number | null; p99: number | null }[] {
    const q = job.result?.accuracy?.quantities ?? {};
    return Object.entries(q).map(([name, s]) => ({ name, ...s }));
  }

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) return;
    this.loading.set(true);
    this.error.set('');
    const done = this.pendingTasks.add();
    try {
      const [jobs, tables, permissions] = await Promise.all([
        firstValueFrom(this.jobsApi.jobs()),
        firstValueFrom(this.jobsApi.tables()),
        firstValueFrom(this.api.permissions(organisationId)),
      ]);
      if (organisationId !== this.session.organisationId()) return;
      this.jobs.set(jobs);
      this.tables.set(tables);
      this.actions.set(permissions.actions);
    } catch (error) {
      this.error.set(problemMessage(error, 'The jobs could not be loaded.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  /** A quiet reload for progress (errors keep the last answer on screen). */
  protected async refresh(): Promise<void> {
    try {
      const [jobs, tables] = await Promise.all([firstValueFrom(this.jobsApi.jobs()), firstValueFrom(this.jobsApi.tables())]);
      this.jobs.set(jobs);
      this.tables.set(tables);
    } catch {
      // the next tick tries again
    }
  }

  protected pickFile(event: Event): void {
    const input = event.target as HTMLInputElement;
    this.file.set(input.files?.[0] ?? null);
    this.uploadError.set('');
    this.uploadIssues.set([]);
  }

  protected setGrid(field: keyof TableGridRequest, value: string): void {
    this.grid.update((g) => ({ ...g, [field]: Number(value) }));
  }

  private compositionJson(): string | undefined {
    const c = this.composition();
    if (c === 'columns') return undefined;
    if (c === 'mean') return JSON.stringify({ abar: this.abar(), zbar: this.zbar() });
    return JSON.stringify({ mixture: c });
  }

  protected async submit(): Promise<void> {
    const file = this.file();
    if (!file) return;
    this.uploading.set(true);
    this.uploadError.set('');
    this.uploadIssues.set([]);
    try {
      const job = await firstValueFrom(
        this.jobsApi.submit({ file, method: this.method(), ...(this.jobName().trim() ? { name: this.jobName().trim() } : {}), ...(this.compositionJson() ? { composition: this.compositionJson()! } : {}) }),
      );
      this.jobs.update((jobs) => [job, ...jobs]);
      this.file.set(null);
      this.jobName.set('');
      this.snackBar.open(`Job “${job.name}” queued: ${job.points} states in ${job.chunksTotal} chunks.`, 'OK', { duration: 5000 });
    } catch (error) {
      this.uploadError.set(problemMessage(error, 'The upload was refused.'));
      const problem = asProblem(error);
      const errors = (problem?.['errors'] ?? []) as unknown as Array<{ line?: number; index?: number; column?: string; message: string }>;
      this.uploadIssues.set(
        errors.map((e) => ({
          where: [e.line !== undefined ? `line ${e.line}` : e.index !== undefined ? `index ${e.index}` : '', e.column ?? ''].filter(Boolean).join(', '),
          message: e.message,
        })),
      );
    } finally {
      this.uploading.set(false);
    }
  }

  protected async requestTable(): Promise<void> {
    this.requesting.set(true);
    this.tableError.set('');
    try {
      const mixture = this.tableMixture();
      const build = await firstValueFrom(
        this.jobsApi.requestTable({ grid: this.grid(), ...(this.tableName().trim() ? { name: this.tableName().trim() } : {}), ...(mixture ? { composition: { mixture } } : {}) }),
      );
      this.tables.update((tables) => [build, ...tables]);
      this.snackBar.open(`Table build queued: ${build.points} nodes.`, 'OK', { duration: 5000 });
    } catch (error) {
      this.tableError.set(problemMessage(error, 'The table build was refused.'));
    } finally {
      this.requesting.set(false);
    }
  }

  protected async cancel(job: Job): Promise<void> {
    this.busy.set(job.id);
    try {
      const cancelled = await firstValueFrom(this.jobsApi.cancel(job));
      const replace = (list: readonly Job[]) => list.map((j) => (j.id === cancelled.id ? cancelled : j));
      if (job.kind === 'batch') this.jobs.update(replace);
      else this.tables.update(replace);
    } catch (error) {
      this.snackBar.open(problemMessage(error, 'The job could not be cancelled.'), 'OK', { duration: 6000 });
    } finally {
      this.busy.set(null);
    }
  }

  protected async download(file: JobFile): Promise<void> {
    try {
      const blob = await firstValueFrom(this.jobsApi.download(file));
      const url = URL.createObjectURL(blob);
      const a = document.createElement('a');
      a.href = url;
      a.download = file.fileName;
      a.click();
      setTimeout(() => URL.revokeObjectURL(url), 1000);
    } catch (error) {
      const message = error instanceof HttpErrorResponse && error.status === 409 ? 'Not ready yet.' : problemMessage(error, 'The download failed.');
      this.snackBar.open(message, 'OK', { duration: 6000 });
    }
  }
}
