import { ChangeDetectionStrategy, Component } from '@angular/core';

/** Placeholder until the Mixtures page is built. */
@Component({
  selector: 'fw-mixtures-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Mixtures</h1>
    <p class="fw-page-lead">This page arrives with issue 8.</p>
  `,
})
export class MixturesPage {}
