import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Jobs page is built. */
@Component({
  selector: 'fw-jobs-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Jobs</h1>
    <p class="fw-page-lead">This page arrives with issue 9.</p>
  `,
})
export class JobsPage {}
