import { ChangeDetectionStrategy, Component, DestroyRef, OnInit, computed, inject, input, signal } from '@angular/core';
import {
  AbstractControl,
  FormArray,
  FormControl,
  FormGroup,
  ReactiveFormsModule,
  ValidationErrors,
  ValidatorFn,
  Validators,
} from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';

import { formatNumber } from '../shared/unit-value';

/** One nuclide of a composition: mass number A, charge Z, mass fraction X (as the API takes it). */
export interface Nuclide {
  a: number;
  z: number;
  massFraction: number;
}

export type NuclideRow = FormGroup<{ a: FormControl<number | null>; z: FormControl<number | null>; massFraction: FormControl<number | null> }>;

/** Mass fractions must sum to 1 within this tolerance (as the API requires without `normalize`). */
export const FRACTION_TOLERANCE = 1e-6;

export interface CompositionStats {
  abar: number;
  zbar: number;
  ye: number;
  fractionSum: number;
}

/**
 * Abar = 1/Σ(X/A), Zbar = Abar·Σ(X·Z/A), Ye = Zbar/Abar, from the rows with a usable A and X.
 * Null when no row can be used yet.
 */
export function compositionStats(rows: readonly Partial<Record<keyof Nuclide, number | null>>[]): CompositionStats | null {
  let sumXoverA = 0;
  let sumXZoverA = 0;
  let fractionSum = 0;
  for (const row of rows) {
    const a = row.a;
    const z = row.z ?? 0;
    const x = row.massFraction;
    if (typeof a !== 'number' || typeof x !== 'number' || !(a >= 1) || !Number.isFinite(x)) continue;
    sumXoverA += x / a;
    sumXZoverA += (x * z) / a;
    fractionSum += x;
  }
  if (!(sumXoverA > 0)) return null;
  const abar = 1 / sumXoverA;
  const zbar = abar * sumXZoverA;
  return { abar, zbar, ye: zbar / abar, fractionSum };
}

/** Row validator: Z ≤ A. */
export const chargeWithinMass: ValidatorFn = (group: AbstractControl): ValidationErrors | null => {
  const { a, z } = group.value as { a: number | null; z: number | null };
  return typeof a === 'number' && typeof z === 'number' && z > a ? { chargeAboveMass: true } : null;
};

/** List validator: at least one row, mass fractions summing to 1 within 1e-6. */
export const fractionsSumToOne: ValidatorFn = (list: AbstractControl): ValidationErrors | null => {
  const rows = (list.value ?? []) as { massFraction: number | null }[];
  if (rows.length === 0) return { noNuclides: true };
  const sum = rows.reduce((s, r) => s + (typeof r.massFraction === 'number' ? r.massFraction : 0), 0);
  return Math.abs(sum - 1) <= FRACTION_TOLERANCE ? null : { fractionSum: { sum } };
};

export function nuclideRow(a: number | null = null, z: number | null = null, massFraction: number | null = null): NuclideRow {
  return new FormGroup(
    {
      a: new FormControl<number | null>(a, [Validators.required, Validators.min(1)]),
      z: new FormControl<number | null>(z, [Validators.required, Validators.min(0)]),
      massFraction: new FormControl<number | null>(massFraction, [Validators.required, Validators.min(0), Validators.max(1)]),
    },
    { validators: chargeWithinMass },
  );
}

/** A nuclide list starting as C/O 50/50 by mass. */
export function nuclideList(rows: NuclideRow[] = [nuclideRow(12, 6, 0.5), nuclideRow(16, 8, 0.5)]): FormArray<NuclideRow> {
  return new FormArray<NuclideRow>(rows, { validators: fractionsSumToOne });
}

/** Editor of a nuclide list (A, Z, mass fraction) showing Abar, Zbar and Ye as they are typed. */
@Component({
  selector: 'fw-composition-editor',
  imports: [ReactiveFormsModule, MatButton, MatIconButton, MatIcon, MatFormField, MatLabel, MatInput, MatError],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <fieldset class="editor">
      <legend>Nuclides</legend>
      @for (row of rows().controls; track row; let i = $index) {
        <div class="row" [formGroup]="row">
          <mat-form-field appearance="outline" subscriptSizing="dynamic">
            <mat-label>A</mat-label>
            <input matInput type="number" formControlName="a" min="1" [attr.aria-label]="'Mass number A of nuclide ' + (i + 1)" />
            @if (row.controls.a.invalid) { <mat-error>A ≥ 1</mat-error> }
          </mat-form-field>
          <mat-form-field appearance="outline" subscriptSizing="dynamic">
            <mat-label>Z</mat-label>
            <input matInput type="number" formControlName="z" min="0" [attr.aria-label]="'Charge number Z of nuclide ' + (i + 1)" />
            @if (row.controls.z.invalid) { <mat-error>Z ≥ 0</mat-error> }
          </mat-form-field>
          <mat-form-field appearance="outline" subscriptSizing="dynamic">
            <mat-label>Mass fraction X</mat-label>
            <input matInput type="number" formControlName="massFraction" min="0" max="1" step="0.01"
              [attr.aria-label]="'Mass fraction of nuclide ' + (i + 1)" />
            @if (row.controls.massFraction.invalid) { <mat-error>0 ≤ X ≤ 1</mat-error> }
          </mat-form-field>
          <button matIconButton type="button" (click)="remove(i)" [disabled]="rows().length === 1"
            [attr.aria-label]="'Remove nuclide ' + (i + 1)">
            <mat-icon aria-hidden="true">delete</mat-icon>
          </button>
          @if (row.hasError('chargeAboveMass')) {
            <p class="fw-field-error row-error" role="alert">Z cannot exceed A.</p>
          }
        </div>
      }
      <button matButton type="button" (click)="add()">
        <mat-icon aria-hidden="true">add</mat-icon> Add nuclide
      </button>
      <p class="stats" aria-live="polite">
        @if (stats(); as s) {
          <span>Abar <strong>{{ fmt(s.abar) }}</strong></span>
          <span>Zbar <strong>{{ fmt(s.zbar) }}</strong></span>
          <span>Ye <strong>{{ fmt(s.ye) }}</strong></span>
          <span>ΣX <strong>{{ fmt(s.fractionSum, 7) }}</strong></span>
        } @else {
          <span>Enter A and a mass fraction to see Abar, Zbar and Ye.</span>
        }
      </p>
      @if (sumError(); as sum) {
        <p class="fw-field-error" role="alert">Mass fractions add up to {{ fmt(sum, 7) }}; they must sum to 1 (within 10⁻⁶).</p>
      }
    </fieldset>
  `,
  styles: `
    .editor { border: 1px solid var(--mat-sys-outline-variant); border-radius: var(--mat-sys-corner-medium); padding: 8px 16px 12px; margin: 0; }
    legend { font: var(--mat-sys-title-small); padding: 0 4px; }
    .row { display: grid; grid-template-columns: repeat(3, minmax(80px, 1fr)) auto; gap: 8px; align-items: center; margin-bottom: 8px; }
    .row-error { grid-column: 1 / -1; margin: 0; }
    .stats { display: flex; flex-wrap: wrap; gap: 16px; margin: 8px 0 0; font: var(--mat-sys-body-medium); }
  `,
})
export class CompositionEditor implements OnInit {
  readonly rows = input.required<FormArray<NuclideRow>>();
  private readonly destroyRef = inject(DestroyRef);
  private readonly value = signal<Partial<Nuclide>[]>([]);

  readonly stats = computed(() => compositionStats(this.value() as Record<keyof Nuclide, number | null>[]));
  readonly sumError = computed(() => {
    const s = this.stats();
    this.value();
    const error = this.rows().getError('fractionSum') as { sum: number } | null;
    return error ? error.sum : s && Math.abs(s.fractionSum - 1) > FRACTION_TOLERANCE ? s.fractionSum : null;
  });

  ngOnInit(): void {
    const rows = this.rows();
    this.value.set(rows.getRawValue() as Partial<Nuclide>[]);
    const sub = rows.valueChanges.subscribe(() => this.value.set(rows.getRawValue() as Partial<Nuclide>[]));
    this.destroyRef.onDestroy(() => sub.unsubscribe());
  }

  add(): void {
    this.rows().push(nuclideRow(null, null, null));
  }

  remove(index: number): void {
    this.rows().removeAt(index);
  }

  fmt(value: number, digits = 5): string {
    return formatNumber(value, digits);
  }
}
