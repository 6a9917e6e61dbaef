import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Keys page is built. */
@Component({
  selector: 'fw-keys-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Keys</h1>
    <p class="fw-page-lead">This page arrives with issue 6.</p>
  `,
})
export class KeysPage {}
