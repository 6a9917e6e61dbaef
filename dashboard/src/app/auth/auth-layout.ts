import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatIcon } from '@angular/material/icon';
import { RouterLink, RouterOutlet } from '@angular/router';

import { FermiwellMark } from '../shared/fermiwell-mark';

/** The layout of pages used signed out (or before an organisation exists): no navigation. */
@Component({
  selector: 'fw-auth-layout',
  imports: [FermiwellMark, MatIcon, RouterLink, RouterOutlet],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <header class="bar">
      <a class="fw-wordmark" routerLink="/sign-in" aria-label="Fermiwell, go to sign-in">
        <fw-mark />
        <span>Fermiwell</span>
      </a>
    </header>
    <main class="panel-area">
      <section class="panel">
        <router-outlet />
      </section>
    </main>
    <footer class="footer">
      <mat-icon aria-hidden="true">info</mat-icon>
      <span>Model assumes fully ionized matter; no nuclear physics beyond neutron drip.</span>
    </footer>
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      min-height: 100%;
      background:
        radial-gradient(ellipse at 20% -10%, color-mix(in srgb, var(--mat-sys-tertiary) 14%, transparent), transparent 55%),
        var(--mat-sys-surface);
    }
    .bar {
      display: flex;
      align-items: center;
      height: 64px;
      padding: 0 24px;
      background: linear-gradient(100deg, #0d1226 0%, #151a2f 55%, #3a0031 140%);
    }
    .fw-wordmark {
      display: inline-flex;
      align-items: center;
      gap: 10px;
      color: #ffb59c;
      text-decoration: none;
      font-weight: 500;
      font-size: 1.375rem;
      letter-spacing: 0.02em;
      border-radius: var(--mat-sys-corner-small);
    }
    .fw-wordmark:focus-visible {
      outline: 2px solid #ffb59c;
      outline-offset: 4px;
    }
    .panel-area {
      flex: 1 0 auto;
      display: flex;
      justify-content: center;
      align-items: flex-start;
      padding: 48px 16px;
    }
    .panel {
      width: 100%;
      max-width: 440px;
      padding: 32px;
      border-radius: var(--mat-sys-corner-large);
      background: var(--mat-sys-surface-container-low);
      box-shadow: var(--mat-sys-level1);
    }
    .footer {
      display: flex;
      align-items: center;
      justify-content: center;
      gap: 8px;
      padding: 12px 16px;
      color: var(--mat-sys-on-surface-variant);
      font: var(--mat-sys-body-small);
    }
    .footer mat-icon {
      font-size: 18px;
      width: 18px;
      height: 18px;
    }
  `,
})
export class AuthLayout {}
