import { ChangeDetectionStrategy, Component, OnInit, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { problemKind, problemMessage } from '../core/problem';
import { emailMessage, emailValidators } from '../shared/form-validators';
import { takeFragmentToken } from './fragment-token';

type VerifyState = 'verifying' | 'verified' | 'already' | 'expired' | 'invalid' | 'failed';

/** Opened from the confirmation mail: `/verify-email#token=…`. */
@Component({
  selector: 'fw-verify-email-page',
  imports: [MatButton, MatError, MatFormField, MatInput, MatLabel, MatProgressSpinner, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Confirm your e-mail</h1>
    @switch (state()) {
      @case ('verifying') {
        <div class="fw-state" role="status">
          <mat-progress-spinner diameter="24" mode="indeterminate" aria-hidden="true" />
          <span>Confirming your address…</span>
        </div>
      }
      @case ('verified') {
        <p role="status" class="outcome">Your address is confirmed. You can sign in now.</p>
        <a matButton="filled" routerLink="/sign-in">Sign in</a>
      }
      @case ('already') {
        <p role="status" class="outcome">This address was already confirmed. Just sign in.</p>
        <a matButton="filled" routerLink="/sign-in">Sign in</a>
      }
      @default {
        <p class="fw-form-error" role="alert">{{ message() }}</p>
        @if (sent()) {
          <p role="status">If that address has an account waiting for confirmation, a new link is on its way.</p>
        } @else {
          <form class="fw-form" [formGroup]="form" (ngSubmit)="resend()" novalidate>
            <p class="fw-form-note">Ask for a new link:</p>
            <mat-form-field>
              <mat-label>E-mail</mat-label>
              <input matInput type="email" formControlName="email" autocomplete="email" />
              <mat-error>{{ emailMessage(form.controls.email) }}</mat-error>
            </mat-form-field>
            <div class="fw-form-actions">
              <button matButton="filled" type="submit">Send a new link</button>
              <a matButton routerLink="/sign-in">Back to sign-in</a>
            </div>
          </form>
        }
      }
    }
  `,
})
export class VerifyEmailPage implements OnInit {
  private readonly api = inject(ApiClient);
  private readonly token = takeFragmentToken();
  protected readonly emailMessage = emailMessage;
  protected readonly state = signal<VerifyState>('verifying');
  protected readonly message = signal('');
  protected readonly sent = signal(false);
  protected readonly form = inject(FormBuilder).nonNullable.group({ email: ['', emailValidators] });

  async ngOnInit(): Promise<void> {
    if (!this.token) {
      this.fail('invalid', 'This link is incomplete. Open the link from the mail exactly as it was sent.');
      return;
    }
    try {
      await firstValueFrom(this.api.verifyEmail(this.token));
      this.state.set('verified');
    } catch (error) {
      const kind = problemKind(error);
      if (kind === 'token-used') this.state.set('already');
      else if (kind === 'token-expired') this.fail('expired', 'This link has expired (links last 48 hours).');
      else if (kind === 'invalid-token') this.fail('invalid', 'This link is not valid. A newer link may have replaced it.');
      else this.fail('failed', problemMessage(error));
    }
  }

  protected async resend(): Promise<void> {
    this.form.markAllAsTouched();
    if (this.form.invalid) return;
    try {
      await firstValueFrom(this.api.resendVerification(this.form.controls.email.value.trim()));
      this.sent.set(true);
    } catch (error) {
      this.message.set(problemMessage(error));
    }
  }

  private fail(state: VerifyState, message: string): void {
    this.state.set(state);
    this.message.set(message);
  }
}
