import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatDialogActions, MatDialogContent, MatDialogRef, MatDialogTitle } from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatSnackBar } from '@angular/material/snack-bar';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { PASSWORD_MIN } from '../core/api-types';
import { fieldErrors, problemKind, problemMessage } from '../core/problem';
import { applyServerErrors, matchingPasswords, passwordMessage, passwordValidators } from '../shared/form-validators';
import { Validators } from '@angular/forms';

/** Change password from the user menu. Other sessions end; this one stays. */
@Component({
  selector: 'fw-change-password-dialog',
  imports: [
    MatButton,
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
    <h2 mat-dialog-title>Change password</h2>
    <form [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-dialog-content class="fw-form">
        <mat-form-field>
          <mat-label>Current password</mat-label>
          <input matInput type="password" formControlName="currentPassword" autocomplete="current-password" />
          @if (form.controls.currentPassword.errors?.['server']; as message) {
            <mat-error>{{ message }}</mat-error>
          } @else {
            <mat-error>Enter your current password.</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>New password</mat-label>
          <input matInput type="password" formControlName="password" autocomplete="new-password" />
          <mat-hint>At least {{ minLength }} characters.</mat-hint>
          <mat-error>{{ passwordMessage(form.controls.password) }}</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Repeat the new password</mat-label>
          <input matInput type="password" formControlName="confirm" autocomplete="new-password" />
          <mat-error>Repeat the new password.</mat-error>
        </mat-form-field>
        @if (form.hasError('mismatch') && form.controls.confirm.touched) {
          <p class="fw-field-error" role="alert">The two new passwords differ.</p>
        }
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
        <p class="fw-form-note">Your other signed-in browsers will be signed out.</p>
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" (click)="ref.close()">Cancel</button>
        <button matButton="filled" type="submit" [disabled]="busy()">Change password</button>
      </mat-dialog-actions>
    </form>
  `,
})
export class ChangePasswordDialog {
  protected readonly ref = inject(MatDialogRef<ChangePasswordDialog>);
  private readonly api = inject(ApiClient);
  private readonly snackBar = inject(MatSnackBar);
  protected readonly minLength = PASSWORD_MIN;
  protected readonly passwordMessage = passwordMessage;
  protected readonly busy = signal(false);
  protected readonly error = signal('');

  protected readonly form = inject(FormBuilder).nonNullable.group(
    {
      currentPassword: ['', Validators.required],
      password: ['', passwordValidators],
      confirm: ['', Validators.required],
    },
    { validators: matchingPasswords() },
  );

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid) return;
    this.busy.set(true);
    try {
      const { currentPassword, password } = this.form.getRawValue();
      await firstValueFrom(this.api.changePassword(currentPassword, password));
      this.snackBar.open('Password changed. Other sessions were signed out.', 'OK', { duration: 6000 });
      this.ref.close(true);
    } catch (error) {
      if (problemKind(error) === 'wrong-password') {
        applyServerErrors(this.form, { currentPassword: 'That is not your current password.' });
      } else {
        const fields = fieldErrors(error);
        applyServerErrors(this.form, { ...fields, ...(fields['newPassword'] ? { password: fields['newPassword'] } : {}) });
        this.error.set(problemMessage(error));
      }
    } finally {
      this.busy.set(false);
    }
  }
}
