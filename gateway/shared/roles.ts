/**
 * Who may do what (DESIGN.md §2), written once as data. Services check it (AccessService in
 * gateway/organisations/access.ts) before acting, so REST, GraphQL and any later caller share the
 * same rules; the dashboard reads the caller's row from GET /v1/organisations/{id}/permissions to
 * decide which buttons to show, never to decide what is allowed.
 *
 * Columns: the four organisation roles, then the platform role operator (which applies to every
 * organisation, whether or not the operator is a member). A member who is also an operator gets
 * the union of both columns.
 *
 * "Own" key actions apply to keys the caller created; ".any" to every key of the organisation.
 * Inviting is split by the role the invitation grants, so "maintainers invite developers and
 * viewers" is two cells, not a special case in code.
 */

export const ORGANISATION_ROLES = ['owner', 'maintainer', 'developer', 'viewer'] as const;
export type OrganisationRole = (typeof ORGANISATION_ROLES)[number];
export const PLATFORM_ROLES = ['operator'] as const;
export type PlatformRole = (typeof PLATFORM_ROLES)[number];

/** One row per action: which roles may do it. `x` = allowed, `.` = denied. */
// prettier-ignore
const TABLE = `
action                      viewer developer maintainer owner operator  what it covers
organisation.read              x       x         x        x      x      see the organisation, its plan and your role
members.read                   x       x         x        x      x      list members and their roles
usage.read                     x       x         x        x      x      usage series and quota
keys.read                      x       x         x        x      x      keys' metadata (never a secret)
mixtures.read                  x       x         x        x      x      saved compositions
jobs.read                      x       x         x        x      x      batch jobs and table builds, results
billing.read                   x       x         x        x      x      plan, invoices
eos.evaluate                   .       x         x        x      .      evaluation from the dashboard (Probe)
keys.create                    .       x         x        x      .      create a key (it is then the creator's own)
keys.manage-own                .       x         x        x      .      rotate or revoke a key you created
keys.manage-any                .       .         x        x      .      rotate or revoke any key of the organisation
jobs.create                    .       x         x        x      .      submit a batch job or a table build
jobs.manage                    .       .         x        x      .      cancel or delete anyone's jobs
mixtures.manage                .       .         x        x      .      create, change, delete saved compositions
invitations.read               .       .         x        x      x      pending invitations
members.invite.viewer          .       .         x        x      .      invite (or withdraw an invitation) as viewer
members.invite.developer       .       .         x        x      .      invite (or withdraw an invitation) as developer
members.invite.maintainer      .       .         .        x      .      invite (or withdraw an invitation) as maintainer
members.invite.owner           .       .         .        x      .      invite (or withdraw an invitation) as owner
members.manage                 .       .         .        x      .      change roles, remove members
audit.read                     .       .         x        x      x      the audit log
billing.manage                 .       .         .        x      .      change plan, payment method
organisation.rename            .       .         .        x      .      rename the organisation
organisation.delete            .       .         .        x      .      delete the organisation and everything in it
plans.manage                   .       .         .        .      x      edit plans; set any organisation's plan (platform)
organisations.list-all         .       .         .        .      x      list every organisation (platform)
platform.health                .       .         .        .      x      service health and key metrics (platform)
`;

const COLUMNS = ['viewer', 'developer', 'maintainer', 'owner', 'operator'] as const;
type Column = (typeof COLUMNS)[number];

interface Row {
  action: string;
  allowed: Record<Column, boolean>;
  description: string;
}

function parse(table: string): Row[] {
  const lines = table.split('\n').filter((l) => l.trim() !== '');
  const header = lines[0]!.trim().split(/\s+/);
  if (header.slice(1, 1 + COLUMNS.length).join(' ') !== COLUMNS.join(' ')) throw new Error('roles.ts: table header does not match the columns');
  return lines.slice(1).map((line) => {
    const cells = line.trim().split(/\s+/);
    const marks = cells.slice(1, 1 + COLUMNS.length);
    if (marks.some((m) => m !== 'x' && m !== '.')) throw new Error(`roles.ts: bad mark in row "${line.trim()}"`);
    const allowed = Object.fromEntries(COLUMNS.map((c, i) => [c, marks[i] === 'x'])) as Record<Column, boolean>;
    return { action: cells[0]!, allowed, description: cells.slice(1 + COLUMNS.length).join(' ') };
  });
}

const ROWS = parse(TABLE);

export const ACTIONS = [
  'organisation.read', 'members.read', 'usage.read', 'keys.read', 'mixtures.read', 'jobs.read', 'billing.read',
  'eos.evaluate', 'keys.create', 'keys.manage-own', 'keys.manage-any', 'jobs.create', 'jobs.manage', 'mixtures.manage',
  'invitations.read', 'members.invite.viewer', 'members.invite.developer', 'members.invite.maintainer', 'members.invite.owner',
  'members.manage', 'audit.read', 'billing.manage', 'organisation.rename', 'organisation.delete', 'plans.manage', 'organisations.list-all',
  'platform.health',
] as const;
export type Action = (typeof ACTIONS)[number];

// The typed list and the table must name the same actions.
{
  const inTable = ROWS.map((r) => r.action).sort().join(',');
  const typed = [...ACTIONS].sort().join(',');
  if (inTable !== typed) throw new Error(`roles.ts: the table and ACTIONS disagree:\n${inTable}\n${typed}`);
}

const BY_ACTION = new Map(ROWS.map((r) => [r.action as Action, r]));

/** Platform-wide actions: they do not need an organisation. */
export const PLATFORM_ACTIONS: readonly Action[] = ['plans.manage', 'organisations.list-all', 'platform.health'];

/** Whether someone with this organisation role (null = not a member) and platform role may act. */
export function can(role: OrganisationRole | null, platformRole: PlatformRole | null, action: Action): boolean {
  const row = BY_ACTION.get(action);
  if (!row) return false;
  return (role !== null && row.allowed[role]) || (platformRole === 'operator' && row.allowed.operator);
}

/** Every action this caller may do, in table order (for the dashboard and the permissions route). */
export function allowedActions(role: OrganisationRole | null, platformRole: PlatformRole | null): Action[] {
  return ROWS.filter((r) => can(role, platformRole, r.action as Action)).map((r) => r.action as Action);
}

export function describeAction(action: Action): string {
  return BY_ACTION.get(action)?.description ?? action;
}

/** The invite action for granting `role`. */
export function inviteAction(role: OrganisationRole): Action {
  return `members.invite.${role}` as Action;
}

/** The matrix as rows, for documentation and tests that want to print it. */
export function matrix(): ReadonlyArray<{ action: Action; allowed: Readonly<Record<Column, boolean>>; description: string }> {
  return ROWS.map((r) => ({ action: r.action as Action, allowed: r.allowed, description: r.description }));
}

export function isOrganisationRole(value: unknown): value is OrganisationRole {
  return typeof value === 'string' && (ORGANISATION_ROLES as readonly string[]).includes(value);
}
