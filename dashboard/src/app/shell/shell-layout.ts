import { BreakpointObserver } from '@angular/cdk/layout';
import { ChangeDetectionStrategy, Component, computed, inject, linkedSignal } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatDivider } from '@angular/material/divider';
import { MatIcon } from '@angular/material/icon';
import { MatListItem, MatListItemIcon, MatListItemTitle, MatNavList } from '@angular/material/list';
import { MatMenu, MatMenuItem, MatMenuTrigger } from '@angular/material/menu';
import { MatSidenav, MatSidenavContainer, MatSidenavContent } from '@angular/material/sidenav';
import { MatToolbar } from '@angular/material/toolbar';
import { MatTooltip } from '@angular/material/tooltip';
import { Router, RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { map } from 'rxjs';

import { AuthSession } from '../core/auth-session';
import { FermiwellMark } from '../shared/fermiwell-mark';

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

/** Platform pages, shown to operators only, apart from the organisation's pages. */
export const OPERATOR_NAV_ENTRIES: readonly NavEntry[] = [
  { path: '/operator', label: 'Operator', icon: 'admin_panel_settings' },
];

/** Below this width the side navigation floats over the content and starts closed. */
const NARROW_LAYOUT = '(max-width: 959.98px)';

/** The signed-in layout: toolbar (organisation switcher, user menu), side navigation, the page. */
@Component({
  selector: 'fw-shell-layout',
  imports: [
    FermiwellMark,
    MatButton,
    MatDivider,
    MatIcon,
    MatIconButton,
    MatListItem,
    MatListItemIcon,
    MatListItemTitle,
    MatMenu,
    MatMenuItem,
    MatMenuTrigger,
    MatNavList,
    MatSidenav,
    MatSidenavContainer,
    MatSidenavContent,
    MatToolbar,
    MatTooltip,
    RouterLink,
    RouterLinkActive,
    RouterOutlet,
  ],
  templateUrl: './shell-layout.html',
  styleUrl: './shell-layout.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ShellLayout {
  protected readonly session = inject(AuthSession);
  private readonly dialog = inject(MatDialog);
  private readonly router = inject(Router);

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

  protected readonly organisationLabel = computed(
    () => this.session.currentOrganisation()?.name ?? 'No organisation',
  );

  protected readonly initials = computed(() => {
    const name = this.session.user()?.displayName ?? '';
    const parts = name.trim().split(/\s+/).filter(Boolean);
    return (parts.length > 1 ? parts[0]![0]! + parts[parts.length - 1]![0]! : name.slice(0, 2)).toUpperCase() || '?';
  });

  protected toggleNav(): void {
    this.navOpen.update((open) => !open);
  }

  /** On a narrow screen the navigation covers the page, so get out of the way after a choice. */
  protected navigated(): void {
    if (this.narrow()) {
      this.navOpen.set(false);
    }
  }

  protected switchTo(id: string): void {
    this.session.selectOrganisation(id);
  }

  protected newOrganisation(): void {
    void this.router.navigateByUrl('/new-organisation');
  }

  /** The dialog (and the forms code it needs) loads on first use. */
  protected async changePassword(): Promise<void> {
    const { ChangePasswordDialog } = await import('./change-password-dialog');
    this.dialog.open(ChangePasswordDialog, { width: '440px', maxWidth: '95vw' });
  }

  protected signOut(): void {
    void this.session.signOut();
  }
}
