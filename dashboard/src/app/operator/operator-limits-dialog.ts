import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MAT_DIALOG_DATA, MatDialogActions, MatDialogContent, MatDialogRef, MatDialogTitle } from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';

import { graphqlMessage } from '../core/graphql';
import { OperatorApi, type LimitsChange, type OperatorOrganisation } from './operator-api';

export const PLANS = [
  { id: 'free', name: 'Free' },
  { id: 'group', name: 'Group' },
  { id: 'facility', name: 'Facility' },
] as const;

/** A whole number of at least 1, or empty (= the plan's value). */
const count = (max: number) => new FormControl<number | null>(null, [Validators.min(1), Validators.max(max), Validators.pattern(/^\d+$/)]);

export function limitsForm(org: OperatorOrganisation) {
  const o = org.override;
  const form = new FormGroup({
    plan: new FormControl<string>(org.plan, { nonNullable: true }),
    pointsPerMonth: count(1_000_000_000_000),
    requestsPerSecond: count(100_000),
    maxBatch: count(20_000_000),
    tableBuildsPerMonth: count(10_000),
    tableBuildsUnlimited: new FormControl<boolean>(o?.tableBuildsUnlimited ?? false, { nonNullable: true }),
    reason: new FormControl<string>('', { nonNullable: true, validators: [Validators.required, Validators.minLength(3), Validators.maxLength(500)] }),
  });
  form.patchValue({ pointsPerMonth: o?.pointsPerMonth ?? null, requestsPerSecond: o?.requestsPerSecond ?? null, maxBatch: o?.maxBatch ?? null, tableBuildsPerMonth: o?.tableBuildsPerMonth ?? null });
  return form;
}

/** The change to send: the plan, and the overrides as a whole (empty fields = the plan's value). */
export function changeFromForm(value: ReturnType<typeof limitsForm>['value']): LimitsChange {
  const n = (v: number | string | null | undefined) => (v === null || v === undefined || v === '' ? null : Number(v));
  return {
    plan: value.plan,
    overrides: {
      pointsPerMonth: n(value.pointsPerMonth),
      requestsPerSecond: n(value.requestsPerSecond),
      maxBatch: n(value.maxBatch),
      tableBuildsPerMonth: value.tableBuildsUnlimited ? null : n(value.tableBuildsPerMonth),
      tableBuildsUnlimited: value.tableBuildsUnlimited ?? false,
    },
    reason: (value.reason ?? '').trim(),
  };
}

/** Moves an organisation to a plan and/or overrides its limits; closes with the organisation afterwards. */
@Component({
  selector: 'fw-operator-limits-dialog',
  imports: [DecimalPipe, ReactiveFormsModule, MatButton, MatCheckbox, MatDialogActions, MatDialogContent, MatDialogTitle, MatError, MatFormField, MatHint, MatInput, MatLabel, MatOption, MatSelect],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>Limits of {{ org.name }}</h2>
    <form [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-dialog-content class="fw-form">
        <p class="lead">Empty fields keep the plan’s value. The change applies at once and is recorded in the organisation’s audit log.</p>
        <mat-form-field>
          <mat-label>Plan</mat-label>
          <mat-select formControlName="plan">
            @for (p of plans; track p.id) {
              <mat-option [value]="p.id">{{ p.name }}</mat-option>
            }
          </mat-select>
          <mat-hint>Moving plans here does not charge or refund: billing is unchanged.</mat-hint>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Points per month</mat-label>
          <input matInput type="number" min="1" step="1" formControlName="pointsPerMonth" />
          <mat-hint>Plan ({{ org.planName }}): {{ org.planLimits.pointsPerMonth | number }}</mat-hint>
          <mat-error>A whole number from 1 to 10¹², or empty.</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Requests per second (per key)</mat-label>
          <input matInput type="number" min="1" step="1" formControlName="requestsPerSecond" />
          <mat-hint>Plan: {{ org.planLimits.requestsPerSecond | number }}</mat-hint>
          <mat-error>A whole number from 1 to 100 000, or empty.</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Largest batch (points)</mat-label>
          <input matInput type="number" min="1" step="1" formControlName="maxBatch" />
          <mat-hint>Plan: {{ org.planLimits.maxBatch | number }}</mat-hint>
          <mat-error>A whole number from 1 to 20 000 000, or empty.</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Table builds per month</mat-label>
          <input matInput type="number" min="1" step="1" formControlName="tableBuildsPerMonth" [readonly]="form.controls.tableBuildsUnlimited.value" />
          <mat-hint>Plan: {{ org.planLimits.tableBuildsPerMonth === null ? 'unlimited' : (org.planLimits.tableBuildsPerMonth | number) }}</mat-hint>
          <mat-error>A whole number from 1 to 10 000, or empty.</mat-error>
        </mat-form-field>
        <mat-checkbox formControlName="tableBuildsUnlimited">Unlimited table builds, whatever the plan</mat-checkbox>
        <mat-form-field>
          <mat-label>Reason</mat-label>
          <textarea matInput formControlName="reason" rows="2" maxlength="500"></textarea>
          <mat-hint>Why the limits change; kept in the audit log.</mat-hint>
          <mat-error>Say briefly why (at least 3 characters).</mat-error>
        </mat-form-field>
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" (click)="ref.close()">Cancel</button>
        <button matButton="filled" type="submit" [disabled]="saving()">{{ saving() ? 'Saving…' : 'Save limits' }}</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `.lead { margin: 0 0 8px; color: var(--mat-sys-on-surface-variant); }`,
})
export class OperatorLimitsDialog {
  protected readonly org = inject<OperatorOrganisation>(MAT_DIALOG_DATA);
  protected readonly ref = inject<MatDialogRef<OperatorLimitsDialog, OperatorOrganisation>>(MatDialogRef);
  private readonly api = inject(OperatorApi);
  protected readonly plans = PLANS;
  protected readonly form = limitsForm(this.org);
  protected readonly saving = signal(false);
  protected readonly error = signal('');

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    if (this.form.invalid) return;
    this.saving.set(true);
    this.error.set('');
    try {
      this.ref.close(await this.api.setLimits(this.org.id, changeFromForm(this.form.getRawValue())));
    } catch (error) {
      this.error.set(graphqlMessage(error, 'The limits could not be saved. Please try again.'));
    } finally {
      this.saving.set(false);
    }
  }
}
