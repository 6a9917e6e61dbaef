import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { firstValueFrom } from 'rxjs';

import type { IssuedKey, KeyScope } from '../core/api-types';
import { fieldErrors, problemMessage } from '../core/problem';
import { applyServerErrors } from '../shared/form-validators';
import { KEY_SCOPES, KeysApi } from './keys-api';

export interface KeyCreateDialogData {
  readonly organisationId: string;
}

/** The local date `yyyy-mm-dd` of a Date, for the min of the date input. */
function isoDay(date: Date): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${date.getFullYear()}-${pad(date.getMonth() + 1)}-${pad(date.getDate())}`;
}

/** Name, scopes and an optional expiry; closes with the issued key (and its one-time token). */
@Component({
  selector: 'fw-key-create-dialog',
  imports: [
    MatButton,
    MatCheckbox,
    MatDialogActions,
    MatDialogContent,
    MatDialogTitle,
    MatError,
    MatFormField,
    MatHint,
    MatInput,
    MatLabel,
    ReactiveFormsModule,
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>New API key</h2>
    <form [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-dialog-content class="fw-form">
        <mat-form-field>
          <mat-label>Name</mat-label>
          <input matInput formControlName="name" maxlength="80" cdkFocusInitial />
          <mat-hint>Where it will be used, e.g. “cluster runs, SN Ia grid”.</mat-hint>
          @if (form.controls.name.errors?.['server']; as message) {
            <mat-error>{{ message }}</mat-error>
          } @else {
            <mat-error>Give the key a name (up to 80 characters).</mat-error>
          }
        </mat-form-field>

        <fieldset class="scopes" formGroupName="scopes">
          <legend>What the key may do</legend>
          @for (scope of scopes; track scope.value) {
            <mat-checkbox [formControlName]="scope.value">
              <strong>{{ scope.label }}</strong> <code>{{ scope.value }}</code>
              <span class="scope-hint">{{ scope.hint }}</span>
            </mat-checkbox>
          }
          @if (form.controls.scopes.hasError('none') && form.controls.scopes.touched) {
            <p class="fw-field-error" role="alert">Choose at least one scope.</p>
          }
        </fieldset>

        <mat-form-field>
          <mat-label>Expires on (optional)</mat-label>
          <input matInput type="date" formControlName="expiresOn" [min]="tomorrow" />
          <mat-hint>Leave empty for a key that lasts until revoked. It stops working at the start of that day (UTC).</mat-hint>
          @if (form.controls.expiresOn.errors?.['server']; as message) {
            <mat-error>{{ message }}</mat-error>
          } @else {
            <mat-error>Pick a date after today.</mat-error>
          }
        </mat-form-field>

        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" (click)="ref.close()">Cancel</button>
        <button matButton="filled" type="submit" [disabled]="busy()">Create key</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .scopes {
      display: flex;
      flex-direction: column;
      gap: 2px;
      margin: 8px 0 16px;
      padding: 8px 12px 12px;
      border: 1px solid var(--mat-sys-outline-variant);
      border-radius: var(--mat-sys-corner-small);
    }
    legend {
      padding: 0 4px;
      font: var(--mat-sys-label-large);
    }
    .scope-hint {
      display: block;
      color: var(--mat-sys-on-surface-variant);
      font: var(--mat-sys-body-small);
    }
    code {
      margin-left: 4px;
      color: var(--mat-sys-on-surface-variant);
    }
  `,
})
export class KeyCreateDialog {
  protected readonly ref = inject(MatDialogRef<KeyCreateDialog, IssuedKey>);
  private readonly data = inject<KeyCreateDialogData>(MAT_DIALOG_DATA);
  private readonly api = inject(KeysApi);
  protected readonly scopes = KEY_SCOPES;
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly tomorrow = isoDay(new Date(Date.now() + 86_400_000));

  private readonly fb = inject(FormBuilder).nonNullable;
  protected readonly form = this.fb.group({
    name: ['', [Validators.required, Validators.maxLength(80), Validators.pattern(/\S/)]],
    scopes: this.fb.group(
      {
        'eos:evaluate': [true],
        'jobs:write': [false],
        'usage:read': [false],
      },
      { validators: (group) => (Object.values(group.value as Record<string, boolean>).some(Boolean) ? null : { none: true }) },
    ),
    expiresOn: ['', (control: { value: string }) => (control.value && control.value < this.tomorrow ? { past: true } : null)],
  });

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid) return;
    this.busy.set(true);
    const value = this.form.getRawValue();
    const scopes = (Object.entries(value.scopes) as [KeyScope, boolean][]).filter(([, on]) => on).map(([scope]) => scope);
    try {
      const issued = await firstValueFrom(
        this.api.create(this.data.organisationId, {
          name: value.name.trim(),
          scopes,
          expiresAt: value.expiresOn ? new Date(`${value.expiresOn}T00:00:00Z`).toISOString() : null,
        }),
      );
      this.ref.close(issued);
    } catch (error) {
      const fields = fieldErrors(error);
      applyServerErrors(this.form, { ...fields, ...(fields['expiresAt'] ? { expiresOn: fields['expiresAt'] } : {}) });
      this.error.set(problemMessage(error));
    } finally {
      this.busy.set(false);
    }
  }
}
