import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Plan & billing page is built. */
@Component({
  selector: 'fw-billing-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Plan &amp; billing</h1>
    <p class="fw-page-lead">This page arrives with issue 7.</p>
  `,
})
export class BillingPage {}
