import { ChangeDetectionStrategy, Component, effect, inject, input, output, viewChild } from '@angular/core';
import { FormBuilder, FormGroupDirective, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';

import type { TestCard, TestCardEntry } from './billing-types';

const OUTCOMES: Record<TestCard['outcome'], string> = {
  succeeds: 'accepted',
  declined: 'declined when saved',
  'charge-fails': 'saved, then every payment fails',
};

/** Groups of four for reading ("4242 4242 4242 4242"). */
export function groupDigits(number: string): string {
  return number.replace(/(\d{4})(?=\d)/g, '$1 ');
}

/**
 * Test-mode card entry (presentational): a number from the payment provider's test cards, expiry
 * and CVC. The page sends it to the gateway, which maps it to a test token and never keeps it;
 * the form forgets the number once saved (`reset` input changes).
 */
@Component({
  selector: 'fw-card-form',
  imports: [MatButton, MatError, MatFormField, MatHint, MatIcon, MatInput, MatLabel, ReactiveFormsModule],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <div class="test-mode" role="note">
      <mat-icon aria-hidden="true">science</mat-icon>
      <div>
        <strong>Test mode</strong> — no real money moves. Only the payment provider’s test card numbers are
        accepted; never type a real card number here.
      </div>
    </div>
    <form [formGroup]="form" (ngSubmit)="submit()" novalidate class="card-form" autocomplete="off">
      <mat-form-field class="number">
        <mat-label>Test card number</mat-label>
        <input matInput formControlName="number" inputmode="numeric" autocomplete="off" maxlength="23" />
        <mat-hint>Pick one below, or type it.</mat-hint>
        <mat-error>Enter a test card number (12–19 digits).</mat-error>
      </mat-form-field>
      <mat-form-field class="short">
        <mat-label>Month</mat-label>
        <input matInput formControlName="expMonth" inputmode="numeric" placeholder="MM" maxlength="2" autocomplete="off" />
        <mat-error>1–12</mat-error>
      </mat-form-field>
      <mat-form-field class="short">
        <mat-label>Year</mat-label>
        <input matInput formControlName="expYear" inputmode="numeric" placeholder="YYYY" maxlength="4" autocomplete="off" />
        <mat-error>A future year</mat-error>
      </mat-form-field>
      <mat-form-field class="short">
        <mat-label>CVC</mat-label>
        <input matInput formControlName="cvc" inputmode="numeric" maxlength="4" autocomplete="off" />
        <mat-error>3 or 4 digits</mat-error>
      </mat-form-field>
      <div class="actions">
        <button matButton="filled" type="submit" class="save-card" [disabled]="busy()">
          {{ busy() ? 'Saving…' : 'Save card' }}
        </button>
      </div>
    </form>
    @if (error()) {
      <p class="fw-form-error card-error" role="alert">{{ error() }}</p>
    }
    <table class="test-cards">
      <caption>Test cards</caption>
      <tbody>
        @for (card of testCards(); track card.number) {
          <tr>
            <td><code>{{ group(card.number) }}</code></td>
            <td>{{ card.label }}</td>
            <td class="outcome outcome-{{ card.outcome }}">{{ outcome(card) }}</td>
            <td><button matButton type="button" class="use-card" (click)="use(card)">Use</button></td>
          </tr>
        }
      </tbody>
    </table>
  `,
  styles: `
    .test-mode {
      display: flex;
      gap: 12px;
      align-items: flex-start;
      padding: 12px 16px;
      margin-bottom: 16px;
      border-radius: var(--mat-sys-corner-small);
      border: 2px dashed var(--mat-sys-tertiary);
      background: var(--mat-sys-tertiary-container);
      color: var(--mat-sys-on-tertiary-container);
    }
    .card-form {
      display: flex;
      flex-wrap: wrap;
      gap: 8px 12px;
      align-items: flex-start;
    }
    .number {
      flex: 1 1 260px;
    }
    .short {
      width: 96px;
    }
    .actions {
      padding-top: 8px;
    }
    .test-cards {
      margin-top: 8px;
      border-collapse: collapse;
      font: var(--mat-sys-body-medium);
      caption {
        text-align: left;
        font: var(--mat-sys-title-small);
        padding-bottom: 4px;
      }
      td {
        padding: 2px 12px 2px 0;
      }
    }
    .outcome-declined,
    .outcome-charge-fails {
      color: var(--mat-sys-error);
    }
  `,
})
export class CardForm {
  readonly testCards = input<readonly TestCard[]>([]);
  readonly busy = input(false);
  readonly error = input('');
  /** Change it (e.g. a counter) to clear the form after a card was saved. */
  readonly reset = input(0);
  readonly submitted = output<TestCardEntry>();

  private readonly fb = inject(FormBuilder);
  private readonly formDirective = viewChild(FormGroupDirective);
  protected readonly form = this.fb.nonNullable.group({
    number: ['', [Validators.required, Validators.pattern(/^[\d -]{12,23}$/)]],
    expMonth: ['12', [Validators.required, Validators.pattern(/^(0?[1-9]|1[0-2])$/)]],
    expYear: [String(new Date().getFullYear() + 2), [Validators.required, Validators.pattern(/^20\d\d$/)]],
    cvc: ['123', [Validators.required, Validators.pattern(/^\d{3,4}$/)]],
  });

  constructor() {
    effect(() => {
      // forget the number, and the submitted state, so the empty field is not shown as an error
      if (this.reset() > 0) this.formDirective()?.resetForm({ ...this.form.getRawValue(), number: '' });
    });
  }

  protected group = groupDigits;

  protected outcome(card: TestCard): string {
    return OUTCOMES[card.outcome];
  }

  protected use(card: TestCard): void {
    this.form.controls.number.setValue(groupDigits(card.number));
  }

  protected submit(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const value = this.form.getRawValue();
    this.submitted.emit({ number: value.number.replace(/[\s-]/g, ''), expMonth: Number(value.expMonth), expYear: Number(value.expYear), cvc: value.cvc });
  }
}
