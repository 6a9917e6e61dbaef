import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Operator page is built. */
@Component({
  selector: 'fw-operator-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Operator</h1>
    <p class="fw-page-lead">This page arrives with issue 8.</p>
  `,
})
export class OperatorPage {}
