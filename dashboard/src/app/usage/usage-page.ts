import { DatePipe, DecimalPipe, PercentPipe, TitleCasePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, PendingTasks, computed, effect, inject, signal, untracked } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MAT_DATE_LOCALE, MAT_NATIVE_DATE_FORMATS, provideNativeDateAdapter } from '@angular/material/core';
import { MatDatepickerToggle, MatDateRangeInput, MatDateRangePicker, MatEndDate, MatStartDate } from '@angular/material/datepicker';
import { MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatSnackBar } from '@angular/material/snack-bar';
import { NgxEchartsDirective } from 'ngx-echarts';

import { AuthSession } from '../core/auth-session';
import { graphqlMessage } from '../core/graphql';
import { problemMessage } from '../core/problem';
import { provideLazyCharts } from '../shared/chart-provider';
import { UsageApi, saveFile, type UsagePageData, type UsageRange } from './usage-api';
import { latencyChart, pointsChart, requestsChart } from './usage-charts';
import { addDays, compact, dayAxis, dayOf, inOrderOf, quotaLine, stackByDay, sum, type GroupBy } from './usage-series';

export const ENDPOINT_LABELS: Record<string, string> = {
  '/v1/eos/evaluate': 'Evaluate (REST)',
  '/v1/eos/invert': 'Invert (REST)',
  '/v1/eos/regime': 'Regime (REST)',
  'graphql:evaluate': 'Evaluate (GraphQL)',
  'graphql:invert': 'Invert (GraphQL)',
  'graphql:regime': 'Regime (GraphQL)',
};

/** The last `days` days up to and including today (UTC), as an API range. */
export function lastDays(days: number, now = Date.now()): UsageRange {
  const today = dayOf(now);
  return { from: addDays(today, 1 - days), to: addDays(today, 1) };
}

/** A date the datepicker gives (local midnight of the picked day) as 'YYYY-MM-DD'. */
export function pickedDay(date: Date): string {
  const p = (n: number) => String(n).padStart(2, '0');
  return `${date.getFullYear()}-${p(date.getMonth() + 1)}-${p(date.getDate())}`;
}

/** 'YYYY-MM-DD' as the local-midnight Date the datepicker shows for that day. */
export function pickerDate(day: string): Date {
  return new Date(Number(day.slice(0, 4)), Number(day.slice(5, 7)) - 1, Number(day.slice(8, 10)));
}

/**
 * The range field writes days as the page does ("3 Nov 2026"): the picker's default, 11/3/2026,
 * reads as 11 March to most of the world. Typed dates in that form are read back.
 */
export const USAGE_DATE_PROVIDERS = [
  provideNativeDateAdapter({
    ...MAT_NATIVE_DATE_FORMATS,
    display: { ...MAT_NATIVE_DATE_FORMATS.display, dateInput: { day: 'numeric', month: 'short', year: 'numeric' } },
  }),
  { provide: MAT_DATE_LOCALE, useValue: 'en-GB' },
];

/** Longest range the page asks for (days): the demo keeps 60 days; a year stays readable as bars. */
export const MAX_RANGE_DAYS = 366;

/** The Usage page (DESIGN.md §7): points and requests per day per key or endpoint, errors, latency, quota, CSV. */
@Component({
  selector: 'fw-usage-page',
  imports: [
    DatePipe,
    DecimalPipe,
    PercentPipe,
    TitleCasePipe,
    ReactiveFormsModule,
    MatButton,
    MatButtonToggle,
    MatButtonToggleGroup,
    MatDateRangeInput,
    MatDateRangePicker,
    MatDatepickerToggle,
    MatEndDate,
    MatFormField,
    MatHint,
    MatIcon,
    MatLabel,
    MatProgressBar,
    MatProgressSpinner,
    MatStartDate,
    MatSuffix,
    NgxEchartsDirective,
  ],
  providers: [provideLazyCharts(), USAGE_DATE_PROVIDERS],
  templateUrl: './usage-page.html',
  styleUrl: './usage-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class UsagePage {
  private readonly session = inject(AuthSession);
  private readonly api = inject(UsageApi);
  private readonly snackBar = inject(MatSnackBar);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly presets = [
    { days: 7, label: '7 days' },
    { days: 30, label: '30 days' },
    { days: 60, label: '60 days' },
  ];
  protected readonly range = signal<UsageRange>(lastDays(30));
  protected readonly groupBy = signal<GroupBy>('key');
  protected readonly loading = signal(true);
  protected readonly exporting = signal(false);
  protected readonly error = signal('');
  protected readonly rangeError = signal('');
  protected readonly data = signal<UsagePageData | null>(null);

  protected readonly rangeForm = new FormGroup({
    start: new FormControl<Date | null>(pickerDate(this.range().from)),
    end: new FormControl<Date | null>(pickerDate(addDays(this.range().to, -1))),
  });

  protected readonly days = computed(() => {
    const d = this.data();
    return d ? dayAxis(d.from, d.to) : [];
  });
  protected readonly keyNames = computed(() => new Map((this.data()?.keys ?? []).map((k) => [k.id, k.name])));
  protected readonly pointsStack = computed(() => stackByDay(this.data()?.grouped ?? [], this.days(), 'points'));
  // in the points chart's order, so each key or endpoint has the same colour in both charts
  protected readonly requestsStack = computed(() => inOrderOf(stackByDay(this.data()?.grouped ?? [], this.days(), 'requests'), this.pointsStack()));
  protected readonly errorsPerDay = computed(() => stackByDay(this.data()?.total ?? [], this.days(), 'errors').totals);
  protected readonly totals = computed(() => {
    const buckets = this.data()?.total ?? [];
    const requests = sum(buckets.map((b) => b.requests));
    const errors = sum(buckets.map((b) => b.errors));
    return { points: sum(buckets.map((b) => b.points)), requests, errors, errorRate: requests > 0 ? errors / requests : 0 };
  });
  protected readonly empty = computed(() => this.data() !== null && this.totals().requests === 0);
  protected readonly quota = computed(() => this.data()?.quota ?? null);
  protected readonly quotaLine = computed(() => {
    const q = this.quota();
    return q ? quotaLine(this.days(), q) : null;
  });
  /** The table beside the charts: one row per day of the range. */
  protected readonly rows = computed(() => {
    const byDay = new Map((this.data()?.total ?? []).map((b) => [dayOf(b.start), b]));
    return this.days().map((day) => {
      const b = byDay.get(day);
      return { day, points: b?.points ?? 0, requests: b?.requests ?? 0, errors: b?.errors ?? 0, p50: b?.latencyP50Ms ?? null, p90: b?.latencyP90Ms ?? null, p99: b?.latencyP99Ms ?? null };
    });
  });

  protected readonly pointsOptions = computed(() => pointsChart(this.days(), this.pointsStack(), (g) => this.label(g), this.quotaLine()));
  protected readonly requestsOptions = computed(() => requestsChart(this.days(), this.requestsStack(), this.errorsPerDay(), (g) => this.label(g)));
  protected readonly latencyOptions = computed(() => {
    const rows = this.rows();
    return latencyChart(this.days(), rows.map((r) => r.p50), rows.map((r) => r.p90), rows.map((r) => r.p99));
  });
  protected readonly compact = compact;

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      const range = this.range();
      const groupBy = this.groupBy();
      untracked(() => void this.load(organisationId, range, groupBy));
    });
  }

  /** A legend name for a group id: the key's name and id, or the endpoint's. */
  protected label(group: string): string {
    if (this.groupBy() === 'endpoint') return ENDPOINT_LABELS[group] ?? group;
    if (group === '') return 'Without a key (dashboard)';
    const name = this.keyNames().get(group);
    return name ? `${name} (${group})` : `Key ${group}`;
  }

  /** An operator may be signed in without any organisation of their own. */
  protected readonly noOrganisation = computed(() => !this.session.organisationId());

  protected async load(organisationId = this.session.organisationId(), range = this.range(), groupBy = this.groupBy()): Promise<void> {
    if (!organisationId) {
      this.loading.set(false);
      return;
    }
    const done = this.pendingTasks.add();
    this.loading.set(true);
    this.error.set('');
    try {
      const data = await this.api.page(organisationId, range, groupBy);
      // a later choice may have overtaken this answer
      if (range === this.range() && groupBy === this.groupBy()) this.data.set(data);
    } catch (error) {
      this.error.set(graphqlMessage(error, 'Usage could not be loaded. Please try again.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  protected choosePreset(days: number): void {
    const range = lastDays(days);
    this.rangeForm.setValue({ start: pickerDate(range.from), end: pickerDate(addDays(range.to, -1)) });
    this.rangeError.set('');
    this.range.set(range);
  }

  protected isPreset(days: number): boolean {
    const r = lastDays(days);
    return this.range().from === r.from && this.range().to === r.to;
  }

  /** The picker closed or a date was typed: take the range when both ends are valid. */
  protected applyPickedRange(): void {
    const { start, end } = this.rangeForm.getRawValue();
    if (!start || !end || Number.isNaN(start.getTime()) || Number.isNaN(end.getTime())) return;
    const from = pickedDay(start);
    const to = addDays(pickedDay(end), 1);
    if (from >= to) {
      this.rangeError.set('The first day must not be after the last.');
      return;
    }
    if (dayAxis(from, to).length > MAX_RANGE_DAYS) {
      this.rangeError.set(`Choose at most ${MAX_RANGE_DAYS} days.`);
      return;
    }
    this.rangeError.set('');
    if (from !== this.range().from || to !== this.range().to) this.range.set({ from, to });
  }

  protected setGroupBy(value: GroupBy): void {
    this.groupBy.set(value);
  }

  /** Downloads exactly what is shown: the same range and split, as the gateway writes it. */
  protected async exportCsv(): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    this.exporting.set(true);
    try {
      const file = await this.api.csv(organisationId, this.range(), this.groupBy());
      saveFile(file.fileName, file.text);
    } catch (error) {
      this.snackBar.open(problemMessage(error, 'The CSV file could not be made. Please try again.'), 'Dismiss', { duration: 8000 });
    } finally {
      this.exporting.set(false);
    }
  }

  protected lastDay(): string {
    return addDays(this.range().to, -1);
  }
}
