/**
 * Accounts and sessions: sign-up with a verification mail, e-mail verification, sign-in, session
 * refresh with rotation and reuse detection, sign-out, password reset by mail, password change.
 *
 * Decisions (also in gateway/auth/README.md):
 * - Only verified addresses sign in. The 403 that says so comes only after the right password,
 *   so it tells nothing to someone who does not know it.
 * - Nothing here tells whether an address has an account: sign-up, resend and reset requests answer
 *   the same 202 either way (an existing account gets a mail saying someone tried), and sign-in
 *   failures are one 401 whose timing does not depend on the account existing.
 * - A session is a refresh-token family. Each refresh uses up its token and issues a child; a used
 *   token presented again revokes the whole family (one of the two holders is a thief, and we
 *   cannot tell which). Sign-out and password reset revoke families; access tokens of a revoked
 *   session stop working at once (requireSession checks the session, not only the signature).
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from '../config.js';
import type { AuditLog } from '../audit/service.js';
import type { Mailer } from '../mail/mailer.js';
import { alreadyRegisteredMail, passwordResetMail, verificationMail } from '../mail/messages.js';
import type { Actor } from '../organisations/access.js';
import { ProblemError } from '../shared/problem.js';
import { hashPassword, passwordMatches } from './passwords.js';
import * as store from './store.js';
import { hashToken, newOpaqueToken, signAccessToken, verifyAccessToken } from './tokens.js';

export const VERIFY_TOKEN_TTL_MS = 48 * 3_600_000;
export const RESET_TOKEN_TTL_MS = 3_600_000;

export interface ClientInfo {
  ip: string | null;
  userAgent: string | null;
}

export interface PublicUser {
  id: string;
  email: string;
  displayName: string;
  emailVerified: boolean;
  platformRole: 'operator' | null;
  createdAt: string;
}

export interface IssuedSession {
  accessToken: string;
  /** seconds */
  expiresIn: number;
  refreshToken: string;
  refreshExpiresAt: Date;
  sessionId: string;
  user: PublicUser;
}

export interface AuthenticatedSession {
  actor: Actor;
  sessionId: string;
  user: store.UserRow;
}

export function publicUser(row: store.UserRow): PublicUser {
  return {
    id: row.id,
    email: row.email,
    displayName: row.display_name,
    emailVerified: row.email_verified_at !== null,
    platformRole: row.platform_role ?? null,
    createdAt: new Date(row.created_at).toISOString(),
  };
}

export function actorOf(row: store.UserRow, ip?: string | null): Actor {
  return { userId: row.id, email: row.email, displayName: row.display_name, platformRole: row.platform_role ?? null, ip: ip ?? null };
}

const invalidCredentials = () =>
  new ProblemError('invalid-credentials', 401, 'Sign-in failed', 'The e-mail address or the password is not right. Check both, or choose a new password with "Forgotten password".');

export class AuthService {
  private readonly publicUrl: string;

  constructor(
    private readonly db: Knex,
    private readonly config: Config,
    private readonly mailer: Mailer,
    private readonly audit: AuditLog,
    private readonly logger: Logger,
  ) {
    this.publicUrl = config.PUBLIC_URL.replace(/\/+$/, '');
  }

  /** A dashboard address; tokens travel in the fragment so they never reach a server log. */
  link(page: string, token?: string): string {
    return `${this.publicUrl}/${page}${token ? `#token=${encodeURIComponent(token)}` : ''}`;
  }

  // ── sign-up and verification ──

  async signUp(input: { email: string; password: string; displayName: string }, client: ClientInfo): Promise<void> {
    const email = store.normaliseEmail(input.email);
    const existing = await store.findUserByEmail(this.db, email);
    if (existing?.email_verified_at) {
      this.mailer.send(existing.email, alreadyRegisteredMail({ displayName: existing.display_name, signInLink: this.link('sign-in'), resetLink: this.link('forgot-password') }));
      return;
    }
    const passwordHash = await hashPassword(input.password);
    const user = await this.db.transaction(async (trx) => {
      if (existing) {
        // still unverified: the latest sign-up sets the password; earlier links stop working
        await store.updateUser(trx, existing.id, { password_hash: passwordHash, display_name: input.displayName });
        await store.retireEmailTokens(trx, existing.id, 'verify-email');
        return { ...existing, display_name: input.displayName };
      }
      const created = await store.insertUser(trx, { email, display_name: input.displayName, password_hash: passwordHash });
      await this.audit.record({ action: 'user.signed-up', actor: { userId: created.id, email: created.email }, target: { type: 'user', id: created.id }, ip: client.ip }, trx);
      return created;
    });
    await this.sendVerification(user);
  }

  private async sendVerification(user: store.UserRow) {
    const token = newOpaqueToken();
    await store.insertEmailToken(this.db, { user_id: user.id, purpose: 'verify-email', token_hash: hashToken(token), expires_at: new Date(Date.now() + VERIFY_TOKEN_TTL_MS) });
    this.mailer.send(user.email, verificationMail({ displayName: user.display_name, link: this.link('verify-email', token), validForMs: VERIFY_TOKEN_TTL_MS }));
  }

  async resendVerification(email: string): Promise<void> {
    const user = await store.findUserByEmail(this.db, email);
    if (!user || user.email_verified_at) return; // same answer either way
    await store.retireEmailTokens(this.db, user.id, 'verify-email');
    await this.sendVerification(user);
  }

  /** Uses up a one-time e-mail token (verification or reset) inside `trx`; throws a problem if it is not usable. */
  private async consumeEmailToken(trx: Knex.Transaction, token: string, purpose: store.EmailTokenPurpose): Promise<store.EmailTokenRow> {
    const row = await store.findEmailTokenForUpdate(trx, hashToken(token), purpose);
    const what = purpose === 'verify-email' ? 'confirmation' : 'password reset';
    if (!row) throw new ProblemError('invalid-token', 400, 'Link not valid', `This ${what} link is not valid. Use the newest link we sent, or ask for a new one.`);
    if (row.used_at) throw new ProblemError('token-used', 400, 'Link already used', `This ${what} link was already used (or replaced by a newer one). ${purpose === 'verify-email' ? 'If your address is confirmed, just sign in.' : 'Ask for a new link if you still need one.'}`);
    if (new Date(row.expires_at).getTime() <= Date.now()) throw new ProblemError('token-expired', 400, 'Link expired', `This ${what} link has expired. Ask for a new one.`);
    await store.useEmailToken(trx, row.id);
    return row;
  }

  async verifyEmail(token: string, client: ClientInfo): Promise<PublicUser> {
    return this.db.transaction(async (trx) => {
      const row = await this.consumeEmailToken(trx, token, 'verify-email');
      await store.updateUser(trx, row.user_id, { email_verified_at: trx.fn.now() });
      const user = (await store.findUserById(trx, row.user_id))!;
      await this.audit.record({ action: 'auth.email-verified', actor: { userId: user.id, email: user.email }, target: { type: 'user', id: user.id }, ip: client.ip }, trx);
      return publicUser(user);
    });
  }

  // ── sessions ──

  async signIn(input: { email: string; password: string }, client: ClientInfo): Promise<IssuedSession> {
    const user = await store.findUserByEmail(this.db, input.email);
    const ok = await passwordMatches(input.password, user?.password_hash);
    if (!user || !ok) {
      await this.audit.recordQuietly({
        action: 'auth.sign-in-failed',
        target: user ? { type: 'user', id: user.id } : null,
        details: user ? { reason: 'wrong-password' } : { reason: 'unknown-address' },
        ip: client.ip,
      });
      throw invalidCredentials();
    }
    if (!user.email_verified_at) {
      throw new ProblemError('email-not-verified', 403, 'Address not confirmed yet', 'Confirm your e-mail address with the link we sent before signing in. To get a new link, use POST /v1/auth/verify-email/resend.');
    }
    const issued = await this.startSession(user, client);
    await this.audit.recordQuietly({ action: 'auth.sign-in', actor: { userId: user.id, email: user.email }, target: { type: 'user', id: user.id }, ip: client.ip });
    return issued;
  }

  /** Opens a session for a user whose identity is already established (sign-in, accepted invitation). */
  async startSession(user: store.UserRow, client: ClientInfo): Promise<IssuedSession> {
    const session = await store.insertSession(this.db, {
      user_id: user.id,
      expires_at: new Date(Date.now() + this.config.SESSION_MAX_DAYS * 86_400_000),
      ip: client.ip,
      user_agent: client.userAgent?.slice(0, 300) ?? null,
    });
    const refreshToken = newOpaqueToken();
    const refreshExpiresAt = this.refreshExpiry(new Date(session.expires_at));
    await store.insertRefreshToken(this.db, { session_id: session.id, parent_id: null, token_hash: hashToken(refreshToken), expires_at: refreshExpiresAt });
    return this.issue(user, session.id, refreshToken, refreshExpiresAt);
  }

  private refreshExpiry(sessionEnd: Date): Date {
    return new Date(Math.min(Date.now() + this.config.REFRESH_TOKEN_TTL_DAYS * 86_400_000, sessionEnd.getTime()));
  }

  private issue(user: store.UserRow, sessionId: string, refreshToken: string, refreshExpiresAt: Date): IssuedSession {
    return {
      accessToken: signAccessToken({ userId: user.id, sessionId }, this.config.JWT_SECRET, this.config.ACCESS_TOKEN_TTL_SECONDS),
      expiresIn: this.config.ACCESS_TOKEN_TTL_SECONDS,
      refreshToken,
      refreshExpiresAt,
      sessionId,
      user: publicUser(user),
    };
  }

  /** Rotates a refresh token: the presented one is used up, a child is issued with a new access token. */
  async refresh(refreshToken: string, client: ClientInfo): Promise<IssuedSession> {
    const outcome = await this.db.transaction(async (trx) => {
      const row = await store.findRefreshTokenForUpdate(trx, hashToken(refreshToken));
      if (!row) return { kind: 'unknown' as const };
      if (row.session_revoked_at || row.revoked_at) return { kind: 'revoked' as const };
      if (row.used_at) {
        // a token used twice: one of the holders copied it — end the whole family
        await store.revokeSessions(trx, { sessionId: row.session_id }, 'refresh-token-reuse');
        const user = await store.findUserById(trx, row.user_id);
        await this.audit.record(
          { action: 'auth.refresh-token-reused', actor: user ? { userId: user.id, email: user.email } : null, target: { type: 'user', id: row.user_id }, details: { sessionId: row.session_id }, ip: client.ip },
          trx,
        );
        return { kind: 'reused' as const };
      }
      const now = Date.now();
      if (new Date(row.expires_at).getTime() <= now || new Date(row.session_expires_at).getTime() <= now) return { kind: 'expired' as const };
      await store.markRefreshTokenUsed(trx, row.id);
      const child = newOpaqueToken();
      const expiresAt = this.refreshExpiry(new Date(row.session_expires_at));
      await store.insertRefreshToken(trx, { session_id: row.session_id, parent_id: row.id, token_hash: hashToken(child), expires_at: expiresAt });
      await store.touchSession(trx, row.session_id);
      const user = (await store.findUserById(trx, row.user_id))!;
      return { kind: 'ok' as const, issued: this.issue(user, row.session_id, child, expiresAt) };
    });
    switch (outcome.kind) {
      case 'ok':
        return outcome.issued;
      case 'unknown':
        throw new ProblemError('invalid-refresh-token', 401, 'Session not recognised', 'The refresh cookie is not valid. Sign in again.');
      case 'revoked':
        throw new ProblemError('session-revoked', 401, 'Session ended', 'This session was ended (signed out, password changed, or revoked). Sign in again.');
      case 'reused':
        this.logger.warn({ ip: client.ip }, 'refresh token reused: session family revoked');
        throw new ProblemError('refresh-token-reused', 401, 'Session ended for safety', 'This refresh token had already been used, so the session may have been copied; it has been ended everywhere. Sign in again.');
      case 'expired':
        throw new ProblemError('session-expired', 401, 'Session expired', 'The session has expired. Sign in again.');
    }
  }

  /** Ends one session (sign-out). Unknown or already ended sessions are fine: sign-out is idempotent. */
  async signOut(sessionId: string | null, refreshToken: string | null, client: ClientInfo): Promise<void> {
    let id = sessionId;
    if (!id && refreshToken) {
      const row = await this.db('refresh_tokens').where({ token_hash: hashToken(refreshToken) }).first('session_id');
      id = row?.session_id ?? null;
    }
    if (!id) return;
    const session = await this.db('sessions').where({ id }).first('user_id');
    const ended = await store.revokeSessions(this.db, { sessionId: id }, 'sign-out');
    if (ended > 0 && session) {
      const user = await store.findUserById(this.db, session.user_id);
      if (user) await this.audit.recordQuietly({ action: 'auth.sign-out', actor: { userId: user.id, email: user.email }, target: { type: 'user', id: user.id }, ip: client.ip });
    }
  }

  /** Verifies an access token and that its session is still live; returns the acting user. */
  async authenticate(accessToken: string, ip: string | null): Promise<AuthenticatedSession> {
    const claims = verifyAccessToken(accessToken, this.config.JWT_SECRET);
    const user = await store.findLiveSessionUser(this.db, claims.sessionId, claims.userId);
    if (!user) throw new ProblemError('session-revoked', 401, 'Session ended', 'This session has ended (signed out, password changed, or revoked). Sign in again.');
    return { actor: actorOf(user, ip), sessionId: claims.sessionId, user };
  }

  // ── passwords ──

  async requestPasswordReset(email: string, client: ClientInfo): Promise<void> {
    const user = await store.findUserByEmail(this.db, email);
    if (!user) return; // same answer either way
    const token = newOpaqueToken();
    await store.retireEmailTokens(this.db, user.id, 'reset-password');
    await store.insertEmailToken(this.db, { user_id: user.id, purpose: 'reset-password', token_hash: hashToken(token), expires_at: new Date(Date.now() + RESET_TOKEN_TTL_MS) });
    this.mailer.send(user.email, passwordResetMail({ displayName: user.display_name, link: this.link('reset-password', token), validForMs: RESET_TOKEN_TTL_MS }));
    await this.audit.recordQuietly({ action: 'auth.password-reset-requested', target: { type: 'user', id: user.id }, ip: client.ip });
  }

  /** Sets a new password from a reset link; ends every session of the account. The mailbox is proven, so it also counts as verified. */
  async resetPassword(token: string, password: string, client: ClientInfo): Promise<void> {
    const passwordHash = await hashPassword(password);
    await this.db.transaction(async (trx) => {
      const row = await this.consumeEmailToken(trx, token, 'reset-password');
      const user = (await store.findUserById(trx, row.user_id))!;
      await store.updateUser(trx, user.id, { password_hash: passwordHash, ...(user.email_verified_at ? {} : { email_verified_at: trx.fn.now() }) });
      await store.retireEmailTokens(trx, user.id, 'reset-password');
      await store.revokeSessions(trx, { userId: user.id }, 'password-reset');
      await this.audit.record({ action: 'auth.password-reset', actor: { userId: user.id, email: user.email }, target: { type: 'user', id: user.id }, ip: client.ip }, trx);
    });
  }

  /** Changes the password of a signed-in user; every other session of the account ends. */
  async changePassword(session: AuthenticatedSession, currentPassword: string, newPassword: string): Promise<void> {
    if (!(await passwordMatches(currentPassword, session.user.password_hash))) {
      throw new ProblemError('wrong-password', 403, 'Current password not right', 'The current password you entered is not right; the password was not changed.');
    }
    const passwordHash = await hashPassword(newPassword);
    await this.db.transaction(async (trx) => {
      await store.updateUser(trx, session.user.id, { password_hash: passwordHash });
      await store.revokeSessions(trx, { userId: session.user.id, exceptSessionId: session.sessionId }, 'password-changed');
      await this.audit.record({ action: 'auth.password-changed', actor: session.actor, target: { type: 'user', id: session.user.id }, ip: session.actor.ip ?? null }, trx);
    });
  }

  async updateProfile(session: AuthenticatedSession, changes: { displayName?: string | undefined }): Promise<PublicUser> {
    if (changes.displayName !== undefined) await store.updateUser(this.db, session.user.id, { display_name: changes.displayName });
    return publicUser((await store.findUserById(this.db, session.user.id))!);
  }
}
