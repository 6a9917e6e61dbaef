/**
 * Shapes of the accounts API as written in gateway/auth/README.md (REST under /v1).
 * Times are ISO 8601 strings in UTC.
 */

export type OrganisationRole = 'owner' | 'maintainer' | 'developer' | 'viewer';
export const ORGANISATION_ROLES: readonly OrganisationRole[] = ['owner', 'maintainer', 'developer', 'viewer'];

export interface User {
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
  readonly emailVerified: boolean;
  readonly platformRole: 'operator' | null;
  readonly createdAt: string;
}

export interface Organisation {
  readonly id: string;
  readonly name: string;
  readonly slug: string;
  readonly plan: 'free' | 'group' | 'facility';
  readonly createdAt: string;
  readonly memberCount: number;
  /** null = an operator looking in without being a member. */
  readonly role: OrganisationRole | null;
}

export interface Me {
  readonly user: User;
  readonly organisations: readonly Organisation[];
  readonly currentOrganisation: { readonly id: string; readonly role: OrganisationRole | null } | null;
}

/** Answer of sign-in, refresh and signed-out invitation acceptance. */
export interface IssuedSession {
  readonly accessToken: string;
  readonly tokenType: 'Bearer';
  readonly expiresIn: number;
  readonly user: User;
}

export interface Permissions {
  readonly role: OrganisationRole | null;
  readonly platformRole: 'operator' | null;
  readonly actions: readonly string[];
}

export interface PersonRef {
  readonly id: string;
  readonly email: string | null;
  readonly displayName: string | null;
}

export type KeyScope = 'eos:evaluate' | 'jobs:write' | 'usage:read';
export type KeyState = 'active' | 'rotating' | 'expired' | 'revoked';

export interface ApiKey {
  readonly id: string;
  readonly name: string;
  readonly prefix: string;
  readonly scopes: readonly KeyScope[];
  readonly createdBy: PersonRef | null;
  readonly createdAt: string;
  readonly lastUsedAt: string | null;
  readonly expiresAt: string | null;
  readonly revokedAt: string | null;
  readonly rotatedAt: string | null;
  readonly previousSecretValidUntil: string | null;
  readonly state: KeyState;
}

/** The one answer that carries a key's secret (create and rotate). */
export interface IssuedKey {
  readonly key: ApiKey;
  readonly token: string;
}

export interface Member {
  readonly user: { readonly id: string; readonly email: string; readonly displayName: string };
  readonly role: OrganisationRole;
  readonly joinedAt: string;
}

export interface Invitation {
  readonly id: string;
  readonly email: string;
  readonly role: OrganisationRole;
  readonly invitedBy: PersonRef | null;
  readonly createdAt: string;
  readonly expiresAt: string;
  readonly state: 'pending' | 'expired';
}

export interface InvitationPreview {
  readonly organisation: { readonly id: string; readonly name: string };
  readonly email: string;
  readonly role: OrganisationRole;
  readonly invitedBy: { readonly displayName: string } | null;
  readonly expiresAt: string;
  readonly accountExists: boolean;
}

export interface AuditEntry {
  readonly id: string;
  readonly createdAt: string;
  readonly action: string;
  readonly scope: 'organisation' | 'account';
  readonly organisationId: string | null;
  readonly actor: PersonRef | null;
  readonly target: { readonly type: string; readonly id: string } | null;
  readonly details: Record<string, unknown>;
  readonly ip: string | null;
}

export interface Page<T> {
  readonly items: readonly T[];
}

export interface AuditPage extends Page<AuditEntry> {
  readonly nextCursor: string | null;
}

/** Password rule of the contract: 10–200 characters. */
export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;
