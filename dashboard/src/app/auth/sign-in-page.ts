import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { AuthSession } from '../core/auth-session';
import { problemKind, problemMessage } from '../core/problem';
import { emailMessage, emailValidators } from '../shared/form-validators';

/** A same-site path to go back to after signing in; anything else is ignored. */
export function safeReturnUrl(value: string | null | undefined): string | null {
  return value && value.startsWith('/') && !value.startsWith('//') && !value.startsWith('/sign-in') ? value : null;
}

@Component({
  selector: 'fw-sign-in-page',
  imports: [MatButton, MatError, MatFormField, MatInput, MatLabel, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Sign in</h1>
    <p class="fw-auth-lead">Manage keys, probe the equation of state and follow your group's usage.</p>
    @if (expired) {
      <p class="fw-form-note expired" role="status">Your session has ended. Please sign in again.</p>
    }
    <form class="fw-form" [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-form-field>
        <mat-label>E-mail</mat-label>
        <input matInput type="email" formControlName="email" autocomplete="username" />
        <mat-error>{{ emailMessage(form.controls.email) }}</mat-error>
      </mat-form-field>
      <mat-form-field>
        <mat-label>Password</mat-label>
        <input matInput type="password" formControlName="password" autocomplete="current-password" />
        <mat-error>Enter your password.</mat-error>
      </mat-form-field>
      @if (error()) {
        <p class="fw-form-error" role="alert">{{ error() }}</p>
      }
      @if (unverified()) {
        <div class="fw-form-note">
          @if (resent()) {
            <span role="status">A new confirmation link is on its way to {{ form.controls.email.value }}.</span>
          } @else {
            <button matButton type="button" (click)="resend()">Send the confirmation link again</button>
          }
        </div>
      }
      <div class="fw-form-actions">
        <button matButton="filled" type="submit" [disabled]="busy()">Sign in</button>
      </div>
    </form>
    <div class="fw-form-links">
      <a routerLink="/forgot-password">Forgot your password?</a>
      <a routerLink="/sign-up">Create an account</a>
    </div>
  `,
})
export class SignInPage {
  private readonly session = inject(AuthSession);
  private readonly api = inject(ApiClient);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);

  protected readonly emailMessage = emailMessage;
  protected readonly expired = this.route.snapshot.queryParamMap.has('expired');
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly unverified = signal(false);
  protected readonly resent = signal(false);

  protected readonly form = inject(FormBuilder).nonNullable.group({
    email: ['', emailValidators],
    password: ['', Validators.required],
  });

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    this.unverified.set(false);
    if (this.form.invalid) return;
    this.busy.set(true);
    try {
      const { email, password } = this.form.getRawValue();
      await this.session.signIn(email.trim(), password);
      const returnUrl = safeReturnUrl(this.route.snapshot.queryParamMap.get('returnUrl'));
      if (this.session.organisations().length === 0 && this.session.isOperator()) {
        // a platform operator needs no organisation of their own: on to the Operator page (in the shell)
        await this.router.navigateByUrl(returnUrl ?? '/operator');
      } else if (this.session.organisations().length === 0 && !returnUrl?.startsWith('/join')) {
        await this.router.navigate(['/new-organisation']);
      } else {
        await this.router.navigateByUrl(returnUrl ?? '/overview');
      }
    } catch (error) {
      const kind = problemKind(error);
      if (kind === 'invalid-credentials') {
        this.error.set('That e-mail and password do not match. Check both and try again.');
      } else if (kind === 'email-not-verified') {
        this.error.set('Please confirm your e-mail address first: open the link in the mail we sent you.');
        this.unverified.set(true);
      } else {
        this.error.set(problemMessage(error));
      }
    } finally {
      this.busy.set(false);
    }
  }

  protected async resend(): Promise<void> {
    try {
      await firstValueFrom(this.api.resendVerification(this.form.controls.email.value.trim()));
      this.resent.set(true);
    } catch (error) {
      this.error.set(problemMessage(error));
    }
  }
}
