import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Team page is built. */
@Component({
  selector: 'fw-team-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Team</h1>
    <p class="fw-page-lead">This page arrives with issue 6.</p>
  `,
})
export class TeamPage {}
