import { BreakpointObserver } from '@angular/cdk/layout';
import { ChangeDetectionStrategy, Component, inject, linkedSignal } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { MatIconButton } from '@angular/material/button';
import { MatDivider } from '@angular/material/divider';
import { MatIcon } from '@angular/material/icon';
import { MatListItem, MatListItemIcon, MatListItemTitle, MatNavList } from '@angular/material/list';
import { MatSidenav, MatSidenavContainer, MatSidenavContent } from '@angular/material/sidenav';
import { MatToolbar } from '@angular/material/toolbar';
import { RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { map } from 'rxjs';

/** One entry of the side navigation. */
export interface NavEntry {
  readonly path: string;
  readonly label: string;
  /** Material Symbols ligature name. */
  readonly icon: string;
}

/** The organisation's pages, in the order of DESIGN.md §2. */
export const NAV_ENTRIES: readonly NavEntry[] = [
  { path: '/overview', label: 'Overview', icon: 'space_dashboard' },
  { path: '/keys', label: 'Keys', icon: 'key' },
  { path: '/probe', label: 'Probe', icon: 'experiment' },
  { path: '/usage', label: 'Usage', icon: 'monitoring' },
  { path: '/jobs', label: 'Jobs', icon: 'stacks' },
  { path: '/mixtures', label: 'Mixtures', icon: 'grain' },
  { path: '/team', label: 'Team', icon: 'group' },
  { path: '/billing', label: 'Plan & billing', icon: 'credit_card' },
  { path: '/documentation', label: 'Docs', icon: 'menu_book' },
];

/** Platform pages, shown apart from the organisation's pages. */
export const OPERATOR_NAV_ENTRIES: readonly NavEntry[] = [
  { path: '/operator', label: 'Operator', icon: 'admin_panel_settings' },
];

/** Below this width the side navigation floats over the content and starts closed. */
const NARROW_LAYOUT = '(max-width: 959.98px)';

@Component({
  selector: 'fw-root',
  imports: [
    MatDivider,
    MatIcon,
    MatIconButton,
    MatListItem,
    MatListItemIcon,
    MatListItemTitle,
    MatNavList,
    MatSidenav,
    MatSidenavContainer,
    MatSidenavContent,
    MatToolbar,
    RouterLink,
    RouterLinkActive,
    RouterOutlet,
  ],
  templateUrl: './app.html',
  styleUrl: './app.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class App {
  protected readonly navEntries = NAV_ENTRIES;
  protected readonly operatorNavEntries = OPERATOR_NAV_ENTRIES;

  protected readonly narrow = toSignal(
    inject(BreakpointObserver)
      .observe(NARROW_LAYOUT)
      .pipe(map((state) => state.matches)),
    { initialValue: false },
  );

  /** Open by default on wide screens, closed on narrow ones; reset whenever the layout changes. */
  protected readonly navOpen = linkedSignal(() => !this.narrow());

  protected toggleNav(): void {
    this.navOpen.update((open) => !open);
  }

  /** On a narrow screen the navigation covers the page, so get out of the way after a choice. */
  protected navigated(): void {
    if (this.narrow()) {
      this.navOpen.set(false);
    }
  }
}
