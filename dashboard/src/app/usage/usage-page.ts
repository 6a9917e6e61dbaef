import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Usage page is built. */
@Component({
  selector: 'fw-usage-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Usage</h1>
    <p class="fw-page-lead">This page arrives with issue 8.</p>
  `,
})
export class UsagePage {}
