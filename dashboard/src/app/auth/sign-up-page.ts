import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { PASSWORD_MIN } from '../core/api-types';
import { fieldErrors, problemMessage } from '../core/problem';
import {
  applyServerErrors,
  emailMessage,
  emailValidators,
  matchingPasswords,
  passwordMessage,
  passwordValidators,
} from '../shared/form-validators';

@Component({
  selector: 'fw-sign-up-page',
  imports: [MatButton, MatError, MatFormField, MatHint, MatIcon, MatInput, MatLabel, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    @if (sentTo(); as address) {
      <div class="inbox" role="status">
        <mat-icon class="inbox-icon" aria-hidden="true">mark_email_unread</mat-icon>
        <h1 class="fw-auth-title">Check your inbox</h1>
        <p>
          We sent a confirmation link to <strong>{{ address }}</strong>. Open it to activate your account,
          then sign in. The link works for 48 hours.
        </p>
        <p class="fw-form-note">
          Running Fermiwell locally? The mail lands in the development mail catcher whose inbox address
          <code>npm start</code> printed.
        </p>
        @if (resent()) {
          <p class="fw-form-note">Another link is on its way; only the newest one works.</p>
        }
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
        <div class="fw-form-actions">
          <a matButton="filled" routerLink="/sign-in">Go to sign-in</a>
          <button matButton type="button" (click)="resend()" [disabled]="resent()">Send the link again</button>
        </div>
      </div>
    } @else {
      <h1 class="fw-auth-title">Create your account</h1>
      <p class="fw-auth-lead">Equation-of-state evaluations for your group's simulation codes.</p>
      <form class="fw-form" [formGroup]="form" (ngSubmit)="submit()" novalidate>
        <mat-form-field>
          <mat-label>Your name</mat-label>
          <input matInput formControlName="displayName" autocomplete="name" />
          @if (form.controls.displayName.errors?.['server']; as message) {
            <mat-error>{{ message }}</mat-error>
          } @else {
            <mat-error>Enter the name your team will see (up to 100 characters).</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>E-mail</mat-label>
          <input matInput type="email" formControlName="email" autocomplete="email" />
          <mat-error>{{ emailMessage(form.controls.email) }}</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Password</mat-label>
          <input matInput type="password" formControlName="password" autocomplete="new-password" />
          <mat-hint>At least {{ minLength }} characters; a passphrase works well.</mat-hint>
          <mat-error>{{ passwordMessage(form.controls.password) }}</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Repeat the password</mat-label>
          <input matInput type="password" formControlName="confirm" autocomplete="new-password" />
          <mat-error>Repeat the password.</mat-error>
        </mat-form-field>
        @if (form.hasError('mismatch') && form.controls.confirm.touched) {
          <p class="fw-field-error mismatch" role="alert">The two passwords differ.</p>
        }
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
        <div class="fw-form-actions">
          <button matButton="filled" type="submit" [disabled]="busy()">Create account</button>
        </div>
      </form>
      <div class="fw-form-links">
        <span>Already registered? <a routerLink="/sign-in">Sign in</a></span>
      </div>
    }
  `,
  styles: `
    .inbox-icon {
      font-size: 40px;
      width: 40px;
      height: 40px;
      color: var(--mat-sys-primary);
    }
  `,
})
export class SignUpPage {
  private readonly api = inject(ApiClient);
  protected readonly minLength = PASSWORD_MIN;
  protected readonly emailMessage = emailMessage;
  protected readonly passwordMessage = passwordMessage;
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly sentTo = signal<string | null>(null);
  protected readonly resent = signal(false);

  protected readonly form = inject(FormBuilder).nonNullable.group(
    {
      displayName: ['', [Validators.required, Validators.maxLength(100), Validators.pattern(/\S/)]],
      email: ['', emailValidators],
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
    const { displayName, email, password } = this.form.getRawValue();
    try {
      await firstValueFrom(this.api.signUp({ displayName: displayName.trim(), email: email.trim(), password }));
      this.sentTo.set(email.trim());
    } catch (error) {
      applyServerErrors(this.form, fieldErrors(error));
      this.error.set(problemMessage(error));
    } finally {
      this.busy.set(false);
    }
  }

  protected async resend(): Promise<void> {
    const address = this.sentTo();
    if (!address) return;
    try {
      await firstValueFrom(this.api.resendVerification(address));
      this.resent.set(true);
    } catch (error) {
      this.error.set(problemMessage(error));
    }
  }
}
