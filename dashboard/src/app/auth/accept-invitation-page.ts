import { ChangeDetectionStrategy, Component, OnInit, computed, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { Router, RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { InvitationPreview, PASSWORD_MIN } from '../core/api-types';
import { AuthSession } from '../core/auth-session';
import { fieldErrors, problemKind, problemMessage } from '../core/problem';
import { applyServerErrors, matchingPasswords, passwordMessage, passwordValidators } from '../shared/form-validators';
import { takeFragmentToken } from './fragment-token';

/** Opened from an invitation mail: `/join#token=…`. Works signed in or signed out. */
@Component({
  selector: 'fw-accept-invitation-page',
  imports: [
    MatButton,
    MatError,
    MatFormField,
    MatHint,
    MatInput,
    MatLabel,
    MatProgressSpinner,
    ReactiveFormsModule,
    RouterLink,
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Join an organisation</h1>
    @if (loading()) {
      <div class="fw-state" role="status">
        <mat-progress-spinner diameter="24" mode="indeterminate" aria-hidden="true" />
        <span>Reading the invitation…</span>
      </div>
    } @else if (preview(); as invite) {
      <p class="fw-auth-lead">
        {{ invite.invitedBy?.displayName ?? 'Someone' }} invited <strong>{{ invite.email }}</strong> to
        <strong>{{ invite.organisation.name }}</strong> as {{ invite.role }}.
      </p>
      @if (error()) {
        <p class="fw-form-error" role="alert">{{ error() }}</p>
      }
      @if (session.signedIn()) {
        @if (emailMatches()) {
          <button matButton="filled" type="button" (click)="acceptSignedIn()" [disabled]="busy()">Accept and open</button>
        } @else {
          <p>
            You are signed in as {{ session.user()?.email }}. Sign out, then open the link again to accept as
            {{ invite.email }}.
          </p>
          <button matButton type="button" (click)="signOut()">Sign out</button>
        }
      } @else if (invite.accountExists) {
        <p>Sign in as {{ invite.email }} to accept.</p>
        <button matButton="filled" type="button" (click)="signInFirst()">Sign in to accept</button>
      } @else {
        <form class="fw-form" [formGroup]="form" (ngSubmit)="acceptWithNewAccount()" novalidate>
          <p class="fw-form-note">Create your account for {{ invite.email }}:</p>
          <mat-form-field>
            <mat-label>Your name</mat-label>
            <input matInput formControlName="displayName" autocomplete="name" />
            <mat-error>Enter the name your team will see.</mat-error>
          </mat-form-field>
          <mat-form-field>
            <mat-label>Password</mat-label>
            <input matInput type="password" formControlName="password" autocomplete="new-password" />
            <mat-hint>At least {{ minLength }} characters.</mat-hint>
            <mat-error>{{ passwordMessage(form.controls.password) }}</mat-error>
          </mat-form-field>
          <mat-form-field>
            <mat-label>Repeat the password</mat-label>
            <input matInput type="password" formControlName="confirm" autocomplete="new-password" />
            <mat-error>Repeat the password.</mat-error>
          </mat-form-field>
          @if (form.hasError('mismatch') && form.controls.confirm.touched) {
            <p class="fw-field-error" role="alert">The two passwords differ.</p>
          }
          <div class="fw-form-actions">
            <button matButton="filled" type="submit" [disabled]="busy()">Create account and join</button>
          </div>
        </form>
      }
    } @else {
      <p class="fw-form-error" role="alert">{{ error() }}</p>
      <a matButton routerLink="/sign-in">Go to sign-in</a>
    }
  `,
})
export class AcceptInvitationPage implements OnInit {
  protected readonly session = inject(AuthSession);
  private readonly api = inject(ApiClient);
  private readonly router = inject(Router);
  private readonly token = takeFragmentToken();

  protected readonly minLength = PASSWORD_MIN;
  protected readonly passwordMessage = passwordMessage;
  protected readonly loading = signal(true);
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly preview = signal<InvitationPreview | null>(null);
  protected readonly emailMatches = computed(
    () => this.session.user()?.email.toLowerCase() === this.preview()?.email.toLowerCase(),
  );

  protected readonly form = inject(FormBuilder).nonNullable.group(
    {
      displayName: ['', [Validators.required, Validators.maxLength(100), Validators.pattern(/\S/)]],
      password: ['', passwordValidators],
      confirm: ['', Validators.required],
    },
    { validators: matchingPasswords() },
  );

  async ngOnInit(): Promise<void> {
    if (!this.token) {
      this.error.set('This invitation link is incomplete. Open the link from the mail exactly as it was sent.');
      this.loading.set(false);
      return;
    }
    await this.session.restore();
    try {
      this.preview.set(await firstValueFrom(this.api.previewInvitation(this.token)));
    } catch (error) {
      this.error.set(this.invitationMessage(error));
    } finally {
      this.loading.set(false);
    }
  }

  protected async acceptSignedIn(): Promise<void> {
    if (!this.token) return;
    this.busy.set(true);
    this.error.set('');
    try {
      const answer = await firstValueFrom(this.api.acceptInvitation(this.token));
      await this.session.loadMe();
      this.session.selectOrganisation(answer.organisation.id);
      await this.router.navigateByUrl('/overview');
    } catch (error) {
      this.error.set(this.invitationMessage(error));
    } finally {
      this.busy.set(false);
    }
  }

  protected async acceptWithNewAccount(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid || !this.token) return;
    this.busy.set(true);
    try {
      const { displayName, password } = this.form.getRawValue();
      const answer = await firstValueFrom(
        this.api.acceptInvitationWithNewAccount({ token: this.token, displayName: displayName.trim(), password }),
      );
      await this.session.adopt(answer);
      this.session.selectOrganisation(answer.organisation.id);
      await this.router.navigateByUrl('/overview');
    } catch (error) {
      applyServerErrors(this.form, fieldErrors(error));
      this.error.set(this.invitationMessage(error));
    } finally {
      this.busy.set(false);
    }
  }

  /** To sign in first, come back here with the same link. */
  protected signInFirst(): void {
    void this.router.navigate(['/sign-in'], { queryParams: { returnUrl: `/join#token=${encodeURIComponent(this.token ?? '')}` } });
  }

  protected signOut(): void {
    void this.session.signOut();
  }

  private invitationMessage(error: unknown): string {
    switch (problemKind(error)) {
      case 'invitation-not-found':
        return 'This invitation is not valid any more: it may have been withdrawn or replaced by a newer one.';
      case 'invitation-used':
        return 'This invitation has already been accepted.';
      case 'invitation-expired':
        return 'This invitation has expired. Ask for a new one.';
      case 'already-member':
        return 'You are already a member of this organisation.';
      case 'sign-in-required':
        return 'An account already uses this address. Sign in, then open the link again.';
      default:
        return problemMessage(error);
    }
  }
}
