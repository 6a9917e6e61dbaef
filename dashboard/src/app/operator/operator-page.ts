import { DatePipe, DecimalPipe, PercentPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, PendingTasks, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormField, MatLabel, MatPrefix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatSnackBar } from '@angular/material/snack-bar';
import { firstValueFrom } from 'rxjs';

import { graphqlMessage } from '../core/graphql';
import { compact } from '../usage/usage-series';
import { OperatorApi, type OperatorHealth, type OperatorOrganisation, type OperatorOverview } from './operator-api';
import { OperatorLimitsDialog } from './operator-limits-dialog';

/** An organisation stands out when a share this large of its last day's requests failed. */
export const FAILING_SHARE = 0.05;

/** The instance metrics shown, in order, with how to write each value. */
export const METRICS: ReadonlyArray<{ key: string; label: string; format: (v: number) => string }> = [
  { key: 'uptimeSeconds', label: 'Uptime', format: (v) => (v >= 86_400 ? `${(v / 86_400).toFixed(1)} d` : v >= 3_600 ? `${(v / 3_600).toFixed(1)} h` : `${Math.round(v)} s`) },
  { key: 'httpRequests', label: 'HTTP requests', format: (v) => v.toLocaleString('en-GB') },
  { key: 'httpServerErrors', label: 'HTTP 5xx answers', format: (v) => v.toLocaleString('en-GB') },
  { key: 'httpMeanSeconds', label: 'Mean response time', format: (v) => `${(v * 1000).toFixed(1)} ms` },
  { key: 'pointsEvaluated', label: 'Points evaluated', format: (v) => compact(v) },
  { key: 'poolThreads', label: 'EOS worker threads', format: (v) => String(v) },
  { key: 'poolQueueDepth', label: 'Batches waiting', format: (v) => String(v) },
  { key: 'poolUtilization', label: 'Worker utilisation', format: (v) => `${(v * 100).toFixed(0)} %` },
  { key: 'dbConnectionsUsed', label: 'Database connections in use', format: (v) => String(v) },
  { key: 'dbConnectionsPending', label: 'Waiting for a connection', format: (v) => String(v) },
  { key: 'meteringFlushLagSeconds', label: 'Usage written', format: (v) => `${v.toFixed(1)} s ago` },
  { key: 'residentMemoryBytes', label: 'Memory (resident)', format: (v) => `${(v / 1_048_576).toFixed(0)} MiB` },
  { key: 'eventLoopLagP99Seconds', label: 'Event-loop lag p99', format: (v) => `${(v * 1000).toFixed(1)} ms` },
];

export function metricRows(health: OperatorHealth): Array<{ label: string; value: string }> {
  return METRICS.filter((m) => health.instance[m.key] !== null && health.instance[m.key] !== undefined).map((m) => ({ label: m.label, value: m.format(health.instance[m.key] as number) }));
}

/** The Operator page (operators only): every organisation with plan, limits and usage; limits; service health. */
@Component({
  selector: 'fw-operator-page',
  imports: [DatePipe, DecimalPipe, PercentPipe, MatButton, MatFormField, MatIcon, MatInput, MatLabel, MatPrefix, MatProgressBar, MatProgressSpinner],
  templateUrl: './operator-page.html',
  styleUrl: './operator-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OperatorPage {
  private readonly api = inject(OperatorApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly data = signal<OperatorOverview | null>(null);
  protected readonly filter = signal('');
  protected readonly organisations = computed(() => {
    const f = this.filter().trim().toLowerCase();
    const all = this.data()?.organisations ?? [];
    return f ? all.filter((o) => `${o.name} ${o.slug} ${o.plan} ${o.id}`.toLowerCase().includes(f)) : all;
  });
  protected readonly metrics = computed(() => {
    const h = this.data()?.health;
    return h ? metricRows(h) : [];
  });

  constructor() {
    void this.load();
  }

  protected async load(): Promise<void> {
    const done = this.pendingTasks.add();
    this.loading.set(true);
    this.error.set('');
    try {
      this.data.set(await this.api.overview());
    } catch (error) {
      this.error.set(graphqlMessage(error, 'The operator view could not be loaded. Please try again.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  protected failing(o: OperatorOrganisation): boolean {
    return o.usage.recentRequests > 0 && o.usage.recentErrors / o.usage.recentRequests >= FAILING_SHARE;
  }

  protected async changeLimits(org: OperatorOrganisation): Promise<void> {
    const ref = this.dialog.open<OperatorLimitsDialog, OperatorOrganisation, OperatorOrganisation>(OperatorLimitsDialog, { data: org, width: '520px', maxWidth: '95vw', autoFocus: 'first-tabbable' });
    const updated = await firstValueFrom(ref.afterClosed());
    if (!updated) return;
    this.data.update((d) => (d ? { ...d, organisations: d.organisations.map((o) => (o.id === updated.id ? updated : o)) } : d));
    this.snackBar.open(`Limits of ${updated.name} saved.`, 'OK', { duration: 5000 });
  }
}
