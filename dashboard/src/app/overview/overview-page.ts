import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Overview page is built. */
@Component({
  selector: 'fw-overview-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Overview</h1>
    <p class="fw-page-lead">This page arrives with issue 8.</p>
  `,
})
export class OverviewPage {}
