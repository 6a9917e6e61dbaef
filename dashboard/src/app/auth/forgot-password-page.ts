import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { problemMessage } from '../core/problem';
import { emailMessage, emailValidators } from '../shared/form-validators';

@Component({
  selector: 'fw-forgot-password-page',
  imports: [MatButton, MatError, MatFormField, MatInput, MatLabel, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Choose a new password</h1>
    @if (sent()) {
      <p role="status">
        If an account uses that address, a link to choose a new password is on its way. It works once,
        within one hour.
      </p>
      <a matButton="filled" routerLink="/sign-in">Back to sign-in</a>
    } @else {
      <p class="fw-auth-lead">Tell us your address and we will mail you a link.</p>
      <form class="fw-form" [formGroup]="form" (ngSubmit)="submit()" novalidate>
        <mat-form-field>
          <mat-label>E-mail</mat-label>
          <input matInput type="email" formControlName="email" autocomplete="email" />
          <mat-error>{{ emailMessage(form.controls.email) }}</mat-error>
        </mat-form-field>
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
        <div class="fw-form-actions">
          <button matButton="filled" type="submit" [disabled]="busy()">Send the link</button>
          <a matButton routerLink="/sign-in">Back to sign-in</a>
        </div>
      </form>
    }
  `,
})
export class ForgotPasswordPage {
  private readonly api = inject(ApiClient);
  protected readonly emailMessage = emailMessage;
  protected readonly busy = signal(false);
  protected readonly sent = signal(false);
  protected readonly error = signal('');
  protected readonly form = inject(FormBuilder).nonNullable.group({ email: ['', emailValidators] });

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid) return;
    this.busy.set(true);
    try {
      await firstValueFrom(this.api.forgotPassword(this.form.controls.email.value.trim()));
      this.sent.set(true);
    } catch (error) {
      this.error.set(problemMessage(error));
    } finally {
      this.busy.set(false);
    }
  }
}
