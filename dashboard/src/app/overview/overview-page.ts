import { DatePipe, DecimalPipe, PercentPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, PendingTasks, computed, effect, inject, signal, untracked } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { RouterLink } from '@angular/router';
import { NgxEchartsDirective } from 'ngx-echarts';

import { AuthSession } from '../core/auth-session';
import { graphqlMessage } from '../core/graphql';
import { provideLazyCharts } from '../shared/chart-provider';
import { lastDays } from '../usage/usage-page';
import { burnDown, dayAxis, failingKeys, stackByDay, type KeyHealth } from '../usage/usage-series';
import { OverviewApi, type OverviewData, type RecentJobs } from './overview-api';
import { burnDownChart, weekChart } from './overview-charts';

/** Share of the quota from which the Overview warns. */
export const NEAR_QUOTA = 0.8;

export interface Warning {
  readonly kind: 'quota' | 'pace' | 'failing-key';
  readonly text: string;
  readonly link: string;
  readonly linkText: string;
}

/** What needs attention, from the period's burn-down and the week's usage per key. */
export function warningsFor(data: OverviewData, now: number): Warning[] {
  const out: Warning[] = [];
  const q = data.period.quota;
  const b = burnDown(data.period.buckets, q, now);
  const pct = (f: number) => `${Math.round(f * 100)} %`;
  if (b.usedFraction >= 1) {
    out.push({ kind: 'quota', text: `The quota of this period is used up (${q.pointsUsed.toLocaleString('en-GB')} of ${q.pointsQuota.toLocaleString('en-GB')} points): requests are refused until ${q.periodEnd.slice(0, 10)}.`, link: '/billing', linkText: 'Change plan' });
  } else if (b.usedFraction >= NEAR_QUOTA) {
    out.push({ kind: 'quota', text: `${pct(b.usedFraction)} of this period’s quota is used; ${q.pointsLeft.toLocaleString('en-GB')} points are left.`, link: '/billing', linkText: 'Change plan' });
  }
  if (b.usedFraction < 1 && b.reachesQuotaOn && b.reachesQuotaOn < q.periodEnd.slice(0, 10)) {
    out.push({ kind: 'pace', text: `At this period’s pace the quota runs out on ${b.reachesQuotaOn}, before the period ends.`, link: '/usage', linkText: 'See usage' });
  }
  const names = new Map(data.organisation.keys.map((k) => [k.id, k.name]));
  for (const k of failingKeys(data.week.buckets)) out.push(failingKeyWarning(k, names.get(k.keyId)));
  return out;
}

function failingKeyWarning(k: KeyHealth, name: string | undefined): Warning {
  const who = k.keyId === '' ? 'Requests made without a key' : `Key “${name ?? k.keyId}” (${k.keyId})`;
  return {
    kind: 'failing-key',
    text: `${who}: ${k.errors.toLocaleString('en-GB')} of ${k.requests.toLocaleString('en-GB')} requests failed in the last 7 days (${(k.errorRate * 100).toFixed(1)} %).`,
    link: '/usage',
    linkText: 'See errors',
  };
}

/** The Overview page (DESIGN.md §7): plan and quota burn-down, the last 7 days, recent jobs, warnings. */
@Component({
  selector: 'fw-overview-page',
  imports: [DatePipe, DecimalPipe, PercentPipe, RouterLink, MatButton, MatIcon, MatProgressBar, MatProgressSpinner, NgxEchartsDirective],
  providers: [provideLazyCharts()],
  templateUrl: './overview-page.html',
  styleUrl: './overview-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OverviewPage {
  private readonly session = inject(AuthSession);
  private readonly api = inject(OverviewApi);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly data = signal<OverviewData | null>(null);
  protected readonly jobs = signal<RecentJobs | null>(null);
  protected readonly jobsError = signal('');
  protected readonly now = signal(Date.now());

  protected readonly quota = computed(() => this.data()?.period.quota ?? null);
  protected readonly burnDown = computed(() => {
    const d = this.data();
    return d ? burnDown(d.period.buckets, d.period.quota, this.now()) : null;
  });
  protected readonly burnDownOptions = computed(() => {
    const b = this.burnDown();
    const q = this.quota();
    return b && q ? burnDownChart(b, q.pointsQuota) : {};
  });
  protected readonly weekDays = computed(() => {
    const r = lastDays(7, this.now());
    return dayAxis(r.from, r.to);
  });
  protected readonly weekPoints = computed(() => stackByDay(this.data()?.week.buckets ?? [], this.weekDays(), 'points').totals);
  protected readonly weekTotal = computed(() => this.weekPoints().reduce((a, b) => a + b, 0));
  protected readonly weekOptions = computed(() => weekChart(this.weekDays(), this.weekPoints()));
  protected readonly warnings = computed(() => {
    const d = this.data();
    return d ? warningsFor(d, this.now()) : [];
  });

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
  }

  /** An operator may be signed in without any organisation of their own. */
  protected readonly noOrganisation = computed(() => !this.session.organisationId());
  protected readonly isOperator = computed(() => this.session.isOperator());

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) {
      this.loading.set(false);
      return;
    }
    const done = this.pendingTasks.add();
    this.loading.set(true);
    this.error.set('');
    this.now.set(Date.now());
    const week = lastDays(7, this.now());
    const overview = this.api.overview(organisationId, week).then(
      (d) => this.data.set(d),
      (e) => this.error.set(graphqlMessage(e, 'The overview could not be loaded. Please try again.')),
    );
    const jobs = this.api.recentJobs(organisationId).then(
      (j) => {
        this.jobs.set(j);
        this.jobsError.set('');
      },
      (e) => this.jobsError.set(graphqlMessage(e, 'Recent jobs could not be loaded.')),
    );
    await Promise.all([overview, jobs]);
    this.loading.set(false);
    done();
  }

  protected planName(plan: string): string {
    return plan.charAt(0).toUpperCase() + plan.slice(1);
  }
}
