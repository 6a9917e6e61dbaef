import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { Router, RouterLink } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import { fieldErrors, problemMessage } from '../core/problem';
import { applyServerErrors } from '../shared/form-validators';

/** The step after a first sign-in (and the toolbar's "New organisation"). */
@Component({
  selector: 'fw-new-organisation-page',
  imports: [MatButton, MatError, MatFormField, MatHint, MatInput, MatLabel, ReactiveFormsModule, RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-auth-title">Create an organisation</h1>
    <p class="fw-auth-lead">
      Keys, usage, jobs and the plan belong to an organisation — usually your research group or
      facility. You will be its owner and can invite others later.
    </p>
    <form class="fw-form" [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-form-field>
        <mat-label>Organisation name</mat-label>
        <input matInput formControlName="name" autocomplete="organization" />
        <mat-hint>For example, the name of your group.</mat-hint>
        @if (form.controls.name.errors?.['server']; as message) {
          <mat-error>{{ message }}</mat-error>
        } @else {
          <mat-error>Use 2 to 120 characters.</mat-error>
        }
      </mat-form-field>
      @if (error()) {
        <p class="fw-form-error" role="alert">{{ error() }}</p>
      }
      <div class="fw-form-actions">
        <button matButton="filled" type="submit" [disabled]="busy()">Create organisation</button>
        @if (session.organisations().length > 0) {
          <a matButton routerLink="/overview">Cancel</a>
        } @else {
          <button matButton type="button" (click)="session.signOut()">Sign out</button>
        }
      </div>
    </form>
  `,
})
export class NewOrganisationPage {
  protected readonly session = inject(AuthSession);
  private readonly router = inject(Router);
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly form = inject(FormBuilder).nonNullable.group({
    name: ['', [Validators.required, Validators.minLength(2), Validators.maxLength(120), Validators.pattern(/\S.*\S|\S\S/)]],
  });

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid) return;
    this.busy.set(true);
    try {
      await this.session.createOrganisation(this.form.controls.name.value.trim());
      await this.router.navigateByUrl('/overview');
    } catch (error) {
      applyServerErrors(this.form, fieldErrors(error));
      this.error.set(problemMessage(error));
    } finally {
      this.busy.set(false);
    }
  }
}
