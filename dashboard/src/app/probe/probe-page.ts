import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Probe page is built. */
@Component({
  selector: 'fw-probe-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Probe</h1>
    <p class="fw-page-lead">This page arrives with issue 8.</p>
  `,
})
export class ProbePage {}
