import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogActions, MatDialogContent, MatDialogRef, MatDialogTitle } from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { firstValueFrom } from 'rxjs';

import { type Mixture, MixturesApi } from '../core/mixtures-api';
import { fieldErrors, problemMessage } from '../core/problem';
import { CompositionEditor, nuclideList, nuclideRow } from '../shared/composition-editor';
import { applyServerErrors } from '../shared/form-validators';

export interface MixtureDialogData {
  /** The mixture to change (saved) or to start from (a built-in one, saved as a copy); null for a new one. */
  readonly mixture: Mixture | null;
  /** True: save as a new mixture even when `mixture` is given. */
  readonly copy: boolean;
  /** Names already used in this organisation (checked before sending; the server has the last word). */
  readonly takenNames: readonly string[];
}

/** Name, description and the nuclide list with live Abar, Zbar and Ye; closes with the saved mixture. */
@Component({
  selector: 'fw-mixture-dialog',
  imports: [
    CompositionEditor,
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
    <h2 mat-dialog-title>{{ editing ? 'Change mixture' : 'New mixture' }}</h2>
    <form [formGroup]="form" (ngSubmit)="submit()" novalidate>
      <mat-dialog-content class="fw-form">
        <mat-form-field>
          <mat-label>Name</mat-label>
          <input matInput formControlName="name" maxlength="80" cdkFocusInitial />
          <mat-hint>Unique in this organisation, e.g. “helium shell, 5 % carbon”.</mat-hint>
          @if (form.controls.name.errors?.['server']; as message) {
            <mat-error>{{ message }}</mat-error>
          } @else if (form.controls.name.hasError('taken')) {
            <mat-error>This organisation already has a mixture with this name.</mat-error>
          } @else {
            <mat-error>Give the mixture a name (up to 80 characters).</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Description (optional)</mat-label>
          <input matInput formControlName="description" maxlength="400" />
        </mat-form-field>
        <fw-composition-editor [rows]="form.controls.nuclides" />
        @if (error()) {
          <p class="fw-form-error" role="alert">{{ error() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" (click)="ref.close()">Cancel</button>
        <button matButton="filled" type="submit" [disabled]="busy()">{{ editing ? 'Save changes' : 'Save mixture' }}</button>
      </mat-dialog-actions>
    </form>
  `,
})
export class MixtureDialog {
  protected readonly ref = inject(MatDialogRef<MixtureDialog, Mixture>);
  private readonly data = inject<MixtureDialogData>(MAT_DIALOG_DATA);
  private readonly api = inject(MixturesApi);
  protected readonly busy = signal(false);
  protected readonly error = signal('');
  protected readonly editing = !!this.data.mixture && !this.data.copy;
  /** One key per opened form: pressing Save twice (or a retry after a lost answer) saves once. */
  private readonly idempotencyKey = crypto.randomUUID();

  protected readonly form = new FormGroup({
    name: new FormControl(this.initialName(), {
      nonNullable: true,
      validators: [
        Validators.required,
        Validators.maxLength(80),
        Validators.pattern(/\S/),
        (control) => {
          const name = String(control.value ?? '').trim().toLowerCase();
          const own = this.editing ? this.data.mixture?.name.toLowerCase() : undefined;
          return name && name !== own && this.data.takenNames.some((t) => t.toLowerCase() === name) ? { taken: true } : null;
        },
      ],
    }),
    description: new FormControl(this.data.mixture?.description ?? '', { nonNullable: true, validators: Validators.maxLength(400) }),
    nuclides: this.data.mixture
      ? nuclideList(this.data.mixture.nuclides.map((n) => nuclideRow(n.a, n.z, n.massFraction)))
      : nuclideList(),
  });

  private initialName(): string {
    const m = this.data.mixture;
    if (!m) return '';
    return this.data.copy ? `${m.name} (copy)` : m.name;
  }

  protected async submit(): Promise<void> {
    this.form.markAllAsTouched();
    this.error.set('');
    if (this.form.invalid) {
      if (this.form.controls.nuclides.invalid) this.error.set('Check the nuclides: every row needs A ≥ 1, 0 ≤ Z ≤ A, and the mass fractions must sum to 1.');
      return;
    }
    this.busy.set(true);
    const value = this.form.getRawValue();
    const input = {
      name: value.name.trim(),
      description: value.description.trim(),
      nuclides: value.nuclides.map((n) => ({ a: Number(n.a), z: Number(n.z), massFraction: Number(n.massFraction) })),
    };
    try {
      const saved = await firstValueFrom(
        this.editing && this.data.mixture ? this.api.update(this.data.mixture.id, input) : this.api.create(input, this.idempotencyKey),
      );
      this.ref.close(saved);
    } catch (error) {
      applyServerErrors(this.form, fieldErrors(error));
      this.error.set(problemMessage(error));
    } finally {
      this.busy.set(false);
    }
  }
}
