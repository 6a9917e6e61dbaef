import { ChangeDetectionStrategy, Component } from '@angular/core';

/** The Fermiwell mark: a hot core in a potential well. Decorative; the wordmark text names it. */
@Component({
  selector: 'fw-mark',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <svg viewBox="0 0 32 32" aria-hidden="true" focusable="false">
      <defs>
        <radialGradient id="fw-mark-core" cx="50%" cy="45%" r="55%">
          <stop offset="0" stop-color="#ffdbcf" />
          <stop offset="0.45" stop-color="#f1642f" />
          <stop offset="1" stop-color="#9b3586" />
        </radialGradient>
      </defs>
      <path d="M5 9c3 0 4 14 11 14s8-14 11-14" fill="none" stroke="#9aaadd" stroke-width="2" stroke-linecap="round" />
      <circle cx="16" cy="15" r="5.5" fill="url(#fw-mark-core)" />
    </svg>
  `,
  styles: `
    :host {
      display: inline-flex;
      width: 28px;
      height: 28px;
    }
    svg {
      width: 100%;
      height: 100%;
    }
  `,
})
export class FermiwellMark {}
