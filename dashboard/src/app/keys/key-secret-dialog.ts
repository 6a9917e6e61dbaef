import { Clipboard } from '@angular/cdk/clipboard';
import { formatDate } from '@angular/common';
import { ChangeDetectionStrategy, Component, LOCALE_ID, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';

export interface KeySecretDialogData {
  readonly name: string;
  readonly token: string;
  /** After a rotation: until when the previous secret still works. */
  readonly previousSecretValidUntil?: string | null;
}

/**
 * Shows a key's full token — the only time the dashboard ever has it. The token lives in this
 * dialog's data and nowhere else; closing the dialog drops it.
 */
@Component({
  selector: 'fw-key-secret-dialog',
  imports: [MatButton, MatDialogActions, MatDialogClose, MatDialogContent, MatDialogTitle, MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>Your new secret for “{{ data.name }}”</h2>
    <mat-dialog-content>
      <p class="once" role="note">
        <mat-icon aria-hidden="true">visibility_off</mat-icon>
        <span>Copy it now and keep it somewhere safe. Fermiwell stores only a hash: you won’t see this secret again.</span>
      </p>
      <label class="token-label" for="fw-key-token">API key</label>
      <div class="token-row">
        <input id="fw-key-token" class="token" readonly [value]="data.token" (focus)="select($event)" spellcheck="false" />
        <button matButton="tonal" type="button" class="copy" (click)="copy()">
          <mat-icon aria-hidden="true">{{ copied() ? 'check' : 'content_copy' }}</mat-icon>
          {{ copied() ? 'Copied' : 'Copy' }}
        </button>
      </div>
      <p class="fw-form-note" aria-live="polite">{{ copied() ? 'The key is on your clipboard.' : '' }}</p>
      @if (data.previousSecretValidUntil) {
        <p class="fw-form-note">The previous secret keeps working until {{ until() }}, so you can switch your codes over.</p>
      }
      <p class="fw-form-note">Send it as <code>Authorization: Bearer &lt;key&gt;</code>.</p>
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button matButton="filled" type="button" [mat-dialog-close]="true">I have stored it</button>
    </mat-dialog-actions>
  `,
  styles: `
    .once {
      display: flex;
      gap: 12px;
      align-items: flex-start;
      margin: 0 0 16px;
      padding: 12px 16px;
      border-radius: var(--mat-sys-corner-small);
      background: var(--mat-sys-tertiary-container);
      color: var(--mat-sys-on-tertiary-container);
    }
    .token-label {
      font: var(--mat-sys-label-large);
    }
    .token-row {
      display: flex;
      gap: 8px;
      align-items: center;
      margin-top: 4px;
    }
    .token {
      flex: 1 1 auto;
      min-width: 0;
      padding: 10px 12px;
      border: 1px solid var(--mat-sys-outline);
      border-radius: var(--mat-sys-corner-extra-small);
      background: var(--mat-sys-surface-container-highest);
      color: var(--mat-sys-on-surface);
      font: 500 0.95rem/1.4 ui-monospace, 'DejaVu Sans Mono', monospace;
    }
    .token:focus-visible {
      outline: 2px solid var(--mat-sys-primary);
      outline-offset: 1px;
    }
  `,
})
export class KeySecretDialog {
  protected readonly data = inject<KeySecretDialogData>(MAT_DIALOG_DATA);
  private readonly clipboard = inject(Clipboard);
  private readonly locale = inject(LOCALE_ID);
  protected readonly copied = signal(false);

  /** As the Keys table writes times ("3 Dec 2026, 10:37"), not in the browser's own locale format. */
  protected until(): string {
    const until = this.data.previousSecretValidUntil;
    return until ? formatDate(until, 'd MMM y, HH:mm', this.locale) : '';
  }

  protected copy(): void {
    this.copied.set(this.clipboard.copy(this.data.token));
  }

  protected select(event: FocusEvent): void {
    (event.target as HTMLInputElement).select();
  }
}
