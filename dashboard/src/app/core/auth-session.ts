import { HttpErrorResponse } from '@angular/common/http';
import { DestroyRef, Injectable, computed, inject, signal } from '@angular/core';
import { Router } from '@angular/router';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from './api-client';
import type { IssuedSession, Organisation, User } from './api-types';
import { problemKind } from './problem';

/** Where the chosen organisation survives reloads (an id, nothing secret). */
export const ORGANISATION_STORAGE_KEY = 'fermiwell.organisation';
/**
 * Whether this browser may hold a refresh cookie (which scripts cannot see): '1' once a session was
 * issued here, '0' once the gateway refused a refresh or the user signed out. A load with '0' does
 * not ask to restore a session — that request could only answer 401, which the browser logs as an
 * error on every signed-out page. Unset or unreadable: ask, as before.
 */
export const SESSION_HINT_STORAGE_KEY = 'fermiwell.session';
/** Refresh this long before the access token runs out. */
const REFRESH_MARGIN_SECONDS = 60;

function readStoredOrganisation(): string | null {
  try {
    return globalThis.localStorage?.getItem(ORGANISATION_STORAGE_KEY) ?? null;
  } catch {
    return null;
  }
}

function storeOrganisation(id: string | null): void {
  try {
    if (id) globalThis.localStorage?.setItem(ORGANISATION_STORAGE_KEY, id);
    else globalThis.localStorage?.removeItem(ORGANISATION_STORAGE_KEY);
  } catch {
    // storage disabled: the choice then lasts for this page only
  }
}

function readSessionHint(): string | null {
  try {
    return globalThis.localStorage?.getItem(SESSION_HINT_STORAGE_KEY) ?? null;
  } catch {
    return null;
  }
}

function storeSessionHint(mayHoldSession: boolean): void {
  try {
    globalThis.localStorage?.setItem(SESSION_HINT_STORAGE_KEY, mayHoldSession ? '1' : '0');
  } catch {
    // storage disabled: every load asks
  }
}

/**
 * The signed-in session of the dashboard (gateway/auth/README.md, Sessions).
 *
 * - The access token lives in memory only; the refresh token is an httpOnly cookie the browser
 *   sends by itself to /v1/auth/session/refresh, so a reload restores the session with one refresh.
 * - Refreshes are serialised: one in flight per tab (callers share it) and, where the browser has
 *   the Web Locks API, one at a time across tabs — a refresh token works once, and presenting a
 *   used one ends the session everywhere.
 * - The current organisation id is kept in localStorage and sent as `Fermiwell-Organisation`.
 */
@Injectable({ providedIn: 'root' })
export class AuthSession {
  private readonly api = inject(ApiClient);
  private readonly router = inject(Router);

  private readonly token = signal<string | null>(null);
  private readonly userSignal = signal<User | null>(null);
  private readonly organisationsSignal = signal<readonly Organisation[]>([]);
  private readonly organisationIdSignal = signal<string | null>(readStoredOrganisation());

  readonly user = this.userSignal.asReadonly();
  readonly organisations = this.organisationsSignal.asReadonly();
  readonly organisationId = this.organisationIdSignal.asReadonly();
  readonly signedIn = computed(() => this.userSignal() !== null);
  readonly isOperator = computed(() => this.userSignal()?.platformRole === 'operator');
  readonly currentOrganisation = computed(
    () => this.organisationsSignal().find((o) => o.id === this.organisationIdSignal()) ?? null,
  );

  private restoring: Promise<boolean> | null = null;
  private refreshing: Promise<string | null> | null = null;
  private refreshTimer: ReturnType<typeof setTimeout> | undefined;

  constructor() {
    inject(DestroyRef).onDestroy(() => clearTimeout(this.refreshTimer));
  }

  /** The access token for `Authorization: Bearer`, or null when signed out. */
  accessToken(): string | null {
    return this.token();
  }

  /**
   * Restores the session after a (re)load from the refresh cookie, once; later calls share the
   * answer. Resolves true when signed in.
   */
  restore(): Promise<boolean> {
    if (this.userSignal()) return Promise.resolve(true);
    const signedOutHere = readSessionHint() === '0';
    this.restoring ??= (signedOutHere ? Promise.resolve(null) : this.refreshAccessToken()).then(async (token) => {
      if (!token) return false;
      try {
        await this.loadMe();
        return true;
      } catch {
        this.clear();
        return false;
      }
    });
    return this.restoring;
  }

  /** Signs in; rejects with the HttpErrorResponse (a problem) on failure. */
  async signIn(email: string, password: string): Promise<void> {
    const issued = await firstValueFrom(this.api.signIn(email, password));
    await this.adopt(issued);
  }

  /** Takes over a session issued by another route (e.g. accepting an invitation signed out). */
  async adopt(issued: IssuedSession): Promise<void> {
    this.accept(issued);
    this.restoring = Promise.resolve(true);
    await this.loadMe();
  }

  /**
   * A new access token from the refresh cookie. Concurrent callers share one request. Resolves
   * null when the session is over (any 401 from refresh, or no answer at all).
   */
  refreshAccessToken(): Promise<string | null> {
    this.refreshing ??= this.runRefresh().finally(() => {
      this.refreshing = null;
    });
    return this.refreshing;
  }

  /** Ends the session on the server and here, then shows the sign-in page. */
  async signOut(): Promise<void> {
    try {
      await firstValueFrom(this.api.signOut());
    } catch {
      // Signing out is idempotent; locally we forget the session whatever the answer.
    }
    storeSessionHint(false);
    this.clear();
    await this.router.navigateByUrl('/sign-in');
  }

  /**
   * The session ended on its own (refresh refused): forget it and go to sign-in, coming back to
   * the current page afterwards.
   */
  endSession(): void {
    this.clear();
    const current = this.router.url;
    if (/^\/(sign-in|sign-up|verify-email|forgot-password|reset-password|join)\b/.test(current)) return;
    const returnUrl = current && current !== '/' ? current : undefined;
    void this.router.navigate(['/sign-in'], { queryParams: returnUrl ? { returnUrl, expired: 1 } : { expired: 1 } });
  }

  /** Loads the person and their organisations, and settles on a current organisation. */
  async loadMe(): Promise<void> {
    let me;
    try {
      me = await firstValueFrom(this.api.me());
    } catch (error) {
      // The stored organisation is not ours (any more): drop it and ask again without it.
      if (problemKind(error) !== 'organisation-not-found') throw error;
      this.selectOrganisation(null);
      me = await firstValueFrom(this.api.me());
    }
    this.userSignal.set(me.user);
    this.organisationsSignal.set(me.organisations);
    const stored = this.organisationIdSignal();
    if (!stored || !me.organisations.some((o) => o.id === stored)) {
      // An operator may look into an organisation they are not in; keep such a choice.
      const keep = stored && me.currentOrganisation?.id === stored;
      if (!keep) this.selectOrganisation(me.organisations[0]?.id ?? null);
    }
  }

  selectOrganisation(id: string | null): void {
    this.organisationIdSignal.set(id);
    storeOrganisation(id);
  }

  /** Creates an organisation (you become its owner) and switches to it. */
  async createOrganisation(name: string): Promise<Organisation> {
    const organisation = await firstValueFrom(this.api.createOrganisation(name));
    this.organisationsSignal.update((list) =>
      [...list, organisation].sort((a, b) => a.name.localeCompare(b.name)),
    );
    this.selectOrganisation(organisation.id);
    return organisation;
  }

  private async runRefresh(): Promise<string | null> {
    const attempt = async (): Promise<string | null> => {
      try {
        const issued = await firstValueFrom(this.api.refresh());
        this.accept(issued);
        return issued.accessToken;
      } catch (error) {
        // Any 401 means the session is over (and its cookie cleared); no answer at all leaves us
        // unable to continue it, but the cookie may still be good for the next load.
        if (error instanceof HttpErrorResponse && error.status === 401) storeSessionHint(false);
        return null;
      }
    };
    const locks = typeof navigator === 'undefined' ? undefined : navigator.locks;
    return locks ? locks.request('fermiwell-refresh', attempt) : attempt();
  }

  private accept(issued: IssuedSession): void {
    storeSessionHint(true);
    this.token.set(issued.accessToken);
    this.userSignal.set(issued.user);
    clearTimeout(this.refreshTimer);
    const seconds = Math.max(issued.expiresIn - REFRESH_MARGIN_SECONDS, 30);
    this.refreshTimer = setTimeout(() => {
      void this.refreshAccessToken().then((token) => {
        if (!token) this.endSession();
      });
    }, seconds * 1000);
  }

  private clear(): void {
    clearTimeout(this.refreshTimer);
    this.token.set(null);
    this.userSignal.set(null);
    this.organisationsSignal.set([]);
    this.restoring = Promise.resolve(false);
  }
}
