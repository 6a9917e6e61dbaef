import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  PendingTasks,
  computed,
  effect,
  inject,
  signal,
  untracked,
  viewChild,
} from '@angular/core';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormField, MatLabel, MatPrefix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatPaginator } from '@angular/material/paginator';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatSort, MatSortHeader } from '@angular/material/sort';
import {
  MatCell,
  MatCellDef,
  MatColumnDef,
  MatHeaderCell,
  MatHeaderCellDef,
  MatHeaderRow,
  MatHeaderRowDef,
  MatNoDataRow,
  MatRow,
  MatRowDef,
  MatTable,
  MatTableDataSource,
} from '@angular/material/table';
import { MatTooltip } from '@angular/material/tooltip';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import type { ApiKey, IssuedKey } from '../core/api-types';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { confirmAction } from '../shared/confirm-dialog';
import { KeyCreateDialog, KeyCreateDialogData } from './key-create-dialog';
import { KeySecretDialog, KeySecretDialogData } from './key-secret-dialog';
import { KeysApi } from './keys-api';

/** Text a key is found by in the filter box. */
function searchText(key: ApiKey): string {
  return [key.name, key.id, key.prefix, key.state, ...key.scopes, key.createdBy?.displayName, key.createdBy?.email]
    .filter(Boolean)
    .join(' ')
    .toLowerCase();
}

/** The Keys page (DESIGN.md §7): list, create (secret shown once), rotate, revoke. */
@Component({
  selector: 'fw-keys-page',
  imports: [
    DatePipe,
    MatButton,
    MatCell,
    MatCellDef,
    MatColumnDef,
    MatFormField,
    MatHeaderCell,
    MatHeaderCellDef,
    MatHeaderRow,
    MatHeaderRowDef,
    MatIcon,
    MatIconButton,
    MatInput,
    MatLabel,
    MatNoDataRow,
    MatPaginator,
    MatPrefix,
    MatProgressSpinner,
    MatRow,
    MatRowDef,
    MatSort,
    MatSortHeader,
    MatTable,
    MatTooltip,
  ],
  templateUrl: './keys-page.html',
  styleUrl: './keys-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class KeysPage {
  private readonly session = inject(AuthSession);
  private readonly keysApi = inject(KeysApi);
  private readonly api = inject(ApiClient);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  /** Loading counts as pending work, so the page is only "stable" once its data is shown. */
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly columns = ['name', 'id', 'scopes', 'createdBy', 'createdAt', 'lastUsedAt', 'expiresAt', 'state', 'actions'];
  protected readonly dataSource = new MatTableDataSource<ApiKey>([]);
  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly keys = signal<readonly ApiKey[]>([]);
  protected readonly actions = signal<readonly string[]>([]);
  protected readonly busyKey = signal<string | null>(null);
  protected readonly filter = signal('');

  protected readonly canCreate = computed(() => this.actions().includes('keys.create'));
  private readonly sort = viewChild(MatSort);
  private readonly paginator = viewChild(MatPaginator);

  constructor() {
    this.dataSource.filterPredicate = (key, filter) => searchText(key).includes(filter);
    this.dataSource.sortingDataAccessor = (key, column) => {
      switch (column) {
        case 'createdBy':
          return (key.createdBy?.displayName ?? '').toLowerCase();
        case 'scopes':
          return key.scopes.join(' ');
        case 'name':
          return key.name.toLowerCase();
        default: {
          const value = key[column as keyof ApiKey];
          return typeof value === 'string' ? value : '';
        }
      }
    };
    effect(() => {
      this.dataSource.sort = this.sort() ?? null;
      this.dataSource.paginator = this.paginator() ?? null;
    });
    effect(() => {
      this.dataSource.data = [...this.keys()];
    });
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
  }

  /** Whether this person may rotate or revoke this key (the server decides in the end). */
  protected canManage(key: ApiKey): boolean {
    const actions = this.actions();
    if (actions.includes('keys.manage-any')) return true;
    return actions.includes('keys.manage-own') && key.createdBy?.id === this.session.user()?.id;
  }

  protected isLive(key: ApiKey): boolean {
    return key.state === 'active' || key.state === 'rotating';
  }

  protected applyFilter(value: string): void {
    this.filter.set(value);
    this.dataSource.filter = value.trim().toLowerCase();
    this.dataSource.paginator?.firstPage();
  }

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) return;
    this.loading.set(true);
    this.error.set('');
    const done = this.pendingTasks.add();
    try {
      const [keys, permissions] = await Promise.all([
        firstValueFrom(this.keysApi.list(organisationId)),
        firstValueFrom(this.api.permissions(organisationId)),
      ]);
      if (organisationId !== this.session.organisationId()) return;
      this.keys.set(keys);
      this.actions.set(permissions.actions);
    } catch (error) {
      this.error.set(problemMessage(error, 'The keys could not be loaded.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  protected create(): void {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    this.dialog
      .open<KeyCreateDialog, KeyCreateDialogData, IssuedKey>(KeyCreateDialog, {
        data: { organisationId },
        width: '520px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe((issued) => {
        if (!issued) return;
        this.keys.update((keys) => [issued.key, ...keys]);
        this.showSecret(issued);
      });
  }

  protected async rotate(key: ApiKey): Promise<void> {
    const confirmed = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Rotate “${key.name}”?`,
        message:
          'A new secret is issued and shown once. The current secret keeps working for 24 hours so your ' +
          'running codes can switch over; rotating again within that time ends it at once.',
        confirm: 'Rotate key',
      }),
    );
    if (!confirmed) return;
    await this.act(key, async (organisationId) => {
      const issued = await firstValueFrom(this.keysApi.rotate(organisationId, key.id));
      this.replace(issued.key);
      this.showSecret(issued);
    });
  }

  protected async revoke(key: ApiKey): Promise<void> {
    const confirmed = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Revoke “${key.name}”?`,
        message:
          `Every request made with ${key.prefix}… will be refused within seconds. ` +
          'This cannot be undone; create a new key if you need access again.',
        confirm: 'Revoke key',
        destructive: true,
      }),
    );
    if (!confirmed) return;
    await this.act(key, async (organisationId) => {
      this.replace(await firstValueFrom(this.keysApi.revoke(organisationId, key.id)));
      this.snackBar.open(`“${key.name}” is revoked.`, 'OK', { duration: 5000 });
    });
  }

  private async act(key: ApiKey, run: (organisationId: string) => Promise<void>): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    this.busyKey.set(key.id);
    try {
      await run(organisationId);
    } catch (error) {
      this.snackBar.open(problemMessage(error), 'Dismiss', { duration: 8000 });
    } finally {
      this.busyKey.set(null);
    }
  }

  private replace(updated: ApiKey): void {
    this.keys.update((keys) => keys.map((k) => (k.id === updated.id ? updated : k)));
  }

  private showSecret(issued: IssuedKey): void {
    this.dialog.open<KeySecretDialog, KeySecretDialogData>(KeySecretDialog, {
      data: { name: issued.key.name, token: issued.token, previousSecretValidUntil: issued.key.previousSecretValidUntil },
      width: '600px',
      maxWidth: '95vw',
      disableClose: true,
    });
  }
}
