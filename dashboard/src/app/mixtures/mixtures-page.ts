import { DatePipe, NgTemplateOutlet } from '@angular/common';
import { ChangeDetectionStrategy, Component, PendingTasks, computed, effect, inject, signal, untracked } from '@angular/core';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatSnackBar } from '@angular/material/snack-bar';
import {
  MatCell,
  MatCellDef,
  MatColumnDef,
  MatHeaderCell,
  MatHeaderCellDef,
  MatHeaderRow,
  MatHeaderRowDef,
  MatRow,
  MatRowDef,
  MatTable,
} from '@angular/material/table';
import { MatTooltip } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { AuthSession } from '../core/auth-session';
import { type Mixture, MixturesApi } from '../core/mixtures-api';
import { problemMessage } from '../core/problem';
import { confirmAction } from '../shared/confirm-dialog';
import { formatNumber } from '../shared/unit-value';
import { MixtureDialog, type MixtureDialogData } from './mixture-dialog';

/** "C12 0.5 · O16 0.5" */
export function nuclideSummary(mixture: Pick<Mixture, 'nuclides'>): string {
  return mixture.nuclides.map((n) => `${n.nuclide} ${formatNumber(n.massFraction, 4)}`).join(' · ');
}

/** The Mixtures page (DESIGN.md §7): built-in and saved compositions with Abar, Zbar, Ye; save, change, delete. */
@Component({
  selector: 'fw-mixtures-page',
  imports: [
    DatePipe,
    NgTemplateOutlet,
    MatButton,
    MatCell,
    MatCellDef,
    MatColumnDef,
    MatHeaderCell,
    MatHeaderCellDef,
    MatHeaderRow,
    MatHeaderRowDef,
    MatIcon,
    MatIconButton,
    MatProgressSpinner,
    MatRow,
    MatRowDef,
    MatTable,
    MatTooltip,
    RouterLink,
  ],
  templateUrl: './mixtures-page.html',
  styleUrl: './mixtures-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MixturesPage {
  private readonly session = inject(AuthSession);
  private readonly mixturesApi = inject(MixturesApi);
  private readonly api = inject(ApiClient);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly columns = ['name', 'nuclides', 'abar', 'zbar', 'ye', 'updatedAt', 'actions'];
  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly mixtures = signal<readonly Mixture[]>([]);
  protected readonly actions = signal<readonly string[]>([]);
  protected readonly busy = signal<string | null>(null);

  protected readonly saved = computed(() => this.mixtures().filter((m) => !m.builtin));
  protected readonly builtin = computed(() => this.mixtures().filter((m) => m.builtin));
  protected readonly canManage = computed(() => this.actions().includes('mixtures.manage'));
  protected readonly summary = nuclideSummary;

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
  }

  protected fmt(value: number): string {
    return formatNumber(value, 6);
  }

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) return;
    this.loading.set(true);
    this.error.set('');
    const done = this.pendingTasks.add();
    try {
      const [mixtures, permissions] = await Promise.all([
        firstValueFrom(this.mixturesApi.list()),
        firstValueFrom(this.api.permissions(organisationId)),
      ]);
      if (organisationId !== this.session.organisationId()) return;
      this.mixtures.set(mixtures);
      this.actions.set(permissions.actions);
    } catch (error) {
      this.error.set(problemMessage(error, 'The mixtures could not be loaded.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  protected open(mixture: Mixture | null, copy = false): void {
    const data: MixtureDialogData = { mixture, copy, takenNames: this.saved().map((m) => m.name) };
    this.dialog
      .open<MixtureDialog, MixtureDialogData, Mixture>(MixtureDialog, { data, width: '640px', maxWidth: '95vw' })
      .afterClosed()
      .subscribe((result) => {
        if (!result) return;
        this.mixtures.update((list) => {
          const others = list.filter((m) => m.id !== result.id);
          return [...others.filter((m) => m.builtin), ...[...others.filter((m) => !m.builtin), result].sort((a, b) => a.name.localeCompare(b.name))];
        });
        this.snackBar.open(`“${result.name}” is saved.`, 'OK', { duration: 4000 });
      });
  }

  protected async remove(mixture: Mixture): Promise<void> {
    const confirmed = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Delete “${mixture.name}”?`,
        message: 'Requests and jobs that name this mixture by its id will be refused afterwards. This cannot be undone.',
        confirm: 'Delete mixture',
        destructive: true,
      }),
    );
    if (!confirmed) return;
    this.busy.set(mixture.id);
    try {
      await firstValueFrom(this.mixturesApi.remove(mixture.id));
      this.mixtures.update((list) => list.filter((m) => m.id !== mixture.id));
      this.snackBar.open(`“${mixture.name}” is deleted.`, 'OK', { duration: 4000 });
    } catch (error) {
      this.snackBar.open(problemMessage(error), 'Dismiss', { duration: 8000 });
    } finally {
      this.busy.set(null);
    }
  }
}
