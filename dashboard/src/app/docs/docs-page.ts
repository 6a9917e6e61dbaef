import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatIcon } from '@angular/material/icon';

/** Where the API contract can be read; both targets are served by the gateway on this origin. */
interface DocsLink {
  readonly href: string;
  readonly label: string;
  readonly description: string;
  readonly icon: string;
}

@Component({
  selector: 'fw-docs-page',
  imports: [MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h1 class="fw-page-heading">Docs</h1>
    <p class="fw-page-lead">
      The API contract, served by the Fermiwell gateway. These pages leave the dashboard.
    </p>
    <ul class="docs-links">
      @for (link of links; track link.href) {
        <li>
          <mat-icon aria-hidden="true">{{ link.icon }}</mat-icon>
          <div>
            <a [href]="link.href">{{ link.label }}</a>
            <code>{{ link.href }}</code>
            <p>{{ link.description }}</p>
          </div>
        </li>
      }
    </ul>
  `,
  styles: `
    .docs-links {
      list-style: none;
      margin: 0;
      padding: 0;
      display: grid;
      gap: 16px;
      max-width: 70ch;
    }
    li {
      display: flex;
      gap: 16px;
      align-items: flex-start;
      padding: 16px;
      border-radius: var(--mat-sys-corner-medium);
      background: var(--mat-sys-surface-container-low);
    }
    mat-icon {
      color: var(--mat-sys-tertiary);
      flex: none;
    }
    a {
      font: var(--mat-sys-title-medium);
      margin-right: 8px;
    }
    code {
      color: var(--mat-sys-on-surface-variant);
    }
    p {
      margin: 4px 0 0;
      color: var(--mat-sys-on-surface-variant);
    }
  `,
})
export class DocsPage {
  protected readonly links: readonly DocsLink[] = [
    {
      href: '/docs',
      label: 'OpenAPI explorer',
      description: 'The REST API under /v1: every endpoint, its parameters, responses and errors.',
      icon: 'api',
    },
    {
      href: '/graphql',
      label: 'GraphQL endpoint',
      description: 'The same evaluation service, plus the account graph the dashboard uses.',
      icon: 'hub',
    },
  ];
}
