import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { PASSWORD_MIN } from '../core/api-types';
import { fieldErrors, problemKind, problemMessage } from '../core/problem';
import { applyServerErrors, matchingPasswords, passwordMessage, passwordValidators } from '../shared/form-validators';
import { takeFragmentToken } from './fragment-token';

/** Opened from the password mail: `/reset-password#token=…`. */
@Component({
  selector: 'fw-reset-password-page',
  imports: [MatButton, MatError, MatFormField, MatHint, MatInput, MatLabel, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Set a new password</h1>
    @if (done()) {
      <p role="status">Your password is changed and every earlier session has ended. Sign in with the new one.</p>
      <a matButton="filled" routerLink="/sign-in">Sign in</a>
    } @else if (!token) {
      <p class="fw-form-error" role="alert">This link is incomplete. Open the link from the mail exactly as it was sent.</p>
      <a matButton routerLink="/forgot-password">Ask for a new link</a>
    } @else {
      <form class="fw-form" [formGroup]="form" (ngSubmit)="submit()" novalidate>
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
          <p class="fw-field-error mismatch" role="alert">The two passwords differ.</p>
        }
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
          @if (linkProblem()) {
            <a matButton routerLink="/forgot-password">Ask for a new link</a>
          }
        }
        <div class="fw-form-actions">
          <button matButton="filled" type="submit" [disabled]="busy()">Save password</button>
        </div>
      </form>
    }
  `,
})
export class ResetPasswordPage {
  private readonly api = inject(ApiClient);
  protected readonly token = takeFragmentToken();
  protected readonly minLength = PASSWORD_MIN;
  protected readonly passwordMessage = passwordMessage;
  protected readonly busy = signal(false);
  protected readonly done = signal(false);
  protected readonly error = signal('');
  protected readonly linkProblem = signal(false);

  protected readonly form = inject(FormBuilder).nonNullable.group(
    { password: ['', passwordValidators], confirm: ['', Validators.required] },
    { validators: matchingPasswords() },
  );

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid || !this.token) return;
    this.busy.set(true);
    try {
      await firstValueFrom(this.api.resetPassword(this.token, this.form.controls.password.value));
      this.done.set(true);
    } catch (error) {
      const kind = problemKind(error);
      this.linkProblem.set(['invalid-token', 'token-used', 'token-expired'].includes(kind));
      if (kind === 'token-used') this.error.set('This link was already used. Ask for a new one.');
      else if (kind === 'token-expired') this.error.set('This link has expired (links last one hour). Ask for a new one.');
      else if (kind === 'invalid-token') this.error.set('This link is not valid. Ask for a new one.');
      else {
        applyServerErrors(this.form, fieldErrors(error));
        this.error.set(problemMessage(error));
      }
    } finally {
      this.busy.set(false);
    }
  }
}
