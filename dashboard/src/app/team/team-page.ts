import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, PendingTasks, computed, effect, inject, signal, untracked, viewChild } from '@angular/core';
import { FormBuilder, FormGroupDirective, ReactiveFormsModule } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import {
  MatCell,
  MatCellDef,
  MatColumnDef,
  MatHeaderCell,
  MatHeaderCellDef,
  MatHeaderRow,
  MatHeaderRowDef,
  MatRow,
  MatRowDef,
  MatTable,
} from '@angular/material/table';
import { MatTooltip } from '@angular/material/tooltip';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import {
  ORGANISATION_ROLES,
  type AuditEntry,
  type Invitation,
  type Member,
  type OrganisationRole,
} from '../core/api-types';
import { AuthSession } from '../core/auth-session';
import { fieldErrors, problemKind, problemMessage } from '../core/problem';
import { confirmAction } from '../shared/confirm-dialog';
import { applyServerErrors, emailMessage, emailValidators } from '../shared/form-validators';
import { AuditQuery, TeamApi } from './team-api';

/** Audit actions offered in the filter (the contract's list; `x.*` matches a family). */
export const AUDIT_ACTIONS: readonly string[] = [
  'auth.*',
  'auth.sign-in',
  'auth.sign-in-failed',
  'auth.password-changed',
  'key.*',
  'key.created',
  'key.rotated',
  'key.revoked',
  'member.*',
  'invitation.*',
  'organisation.*',
  'plan.changed',
];

const AUDIT_PAGE_SIZE = 25;

/** The Team page (DESIGN.md §7): members and roles, invitations, audit log. */
@Component({
  selector: 'fw-team-page',
  imports: [
    DatePipe,
    MatButton,
    MatCell,
    MatCellDef,
    MatColumnDef,
    MatError,
    MatFormField,
    MatHeaderCell,
    MatHeaderCellDef,
    MatHeaderRow,
    MatHeaderRowDef,
    MatIcon,
    MatIconButton,
    MatInput,
    MatLabel,
    MatOption,
    MatProgressSpinner,
    MatRow,
    MatRowDef,
    MatSelect,
    MatTable,
    MatTooltip,
    ReactiveFormsModule,
  ],
  templateUrl: './team-page.html',
  styleUrl: './team-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class TeamPage {
  protected readonly session = inject(AuthSession);
  private readonly teamApi = inject(TeamApi);
  private readonly api = inject(ApiClient);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  /** Loading counts as pending work, so the page is only "stable" once its data is shown. */
  private readonly pendingTasks = inject(PendingTasks);
  private readonly fb = inject(FormBuilder).nonNullable;

  protected readonly roles = ORGANISATION_ROLES;
  protected readonly auditActions = AUDIT_ACTIONS;
  protected readonly emailMessage = emailMessage;
  protected readonly memberColumns = ['name', 'email', 'role', 'joinedAt', 'actions'];
  protected readonly invitationColumns = ['email', 'role', 'invitedBy', 'expiresAt', 'state', 'actions'];
  protected readonly auditColumns = ['createdAt', 'action', 'actor', 'target', 'ip'];

  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly actions = signal<readonly string[]>([]);
  protected readonly members = signal<readonly Member[]>([]);
  protected readonly invitations = signal<readonly Invitation[]>([]);
  protected readonly audit = signal<readonly AuditEntry[]>([]);
  protected readonly auditError = signal('');
  protected readonly auditLoading = signal(false);
  protected readonly inviteError = signal('');
  protected readonly inviting = signal(false);
  /** Cursors of the audit pages seen so far: [0] is the first page (null), the last is the current one. */
  private readonly auditCursors = signal<(string | null)[]>([null]);
  protected readonly auditNext = signal<string | null>(null);
  protected readonly auditPage = computed(() => this.auditCursors().length);

  protected readonly can = (action: string) => this.actions().includes(action);
  protected readonly invitableRoles = computed(() =>
    this.roles.filter((role) => this.actions().includes(`members.invite.${role}`)),
  );

  protected readonly inviteForm = this.fb.group({
    email: ['', emailValidators],
    role: ['developer' as OrganisationRole],
  });
  /** The invitation form's directive: its submitted state must be cleared with the sent address. */
  private readonly inviteFormDirective = viewChild<FormGroupDirective>('inviteFormDirective');

  protected readonly auditFilter = this.fb.group({
    action: [''],
    actor: [''],
    from: [''],
    to: [''],
  });

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
  }

  protected isMe(member: Member): boolean {
    return member.user.id === this.session.user()?.id;
  }

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) return;
    this.loading.set(true);
    this.error.set('');
    const done = this.pendingTasks.add();
    try {
      const permissions = await firstValueFrom(this.api.permissions(organisationId));
      this.actions.set(permissions.actions);
      const [members, invitations] = await Promise.all([
        firstValueFrom(this.teamApi.members(organisationId)),
        this.can('invitations.read') ? firstValueFrom(this.teamApi.invitations(organisationId)) : Promise.resolve([]),
      ]);
      this.members.set(members);
      this.invitations.set(invitations);
      const preferred = this.invitableRoles().includes('developer') ? 'developer' : (this.invitableRoles()[0] ?? 'viewer');
      this.inviteForm.controls.role.setValue(preferred);
      if (this.can('audit.read')) await this.searchAudit();
    } catch (error) {
      this.error.set(problemMessage(error, 'The team could not be loaded.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  protected async changeRole(member: Member, role: OrganisationRole, select?: MatSelect): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId || role === member.role) return;
    try {
      const updated = await firstValueFrom(this.teamApi.changeRole(organisationId, member.user.id, role));
      this.members.update((list) => list.map((m) => (m.user.id === member.user.id ? updated : m)));
      this.refreshAudit();
      this.snackBar.open(`${member.user.displayName} is now ${role}.`, 'OK', { duration: 5000 });
    } catch (error) {
      // Put the select back to the role the server kept.
      if (select) select.value = member.role;
      this.snackBar.open(this.memberMessage(error), 'Dismiss', { duration: 8000 });
    }
  }

  protected async remove(member: Member): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    const leaving = this.isMe(member);
    const organisation = this.session.currentOrganisation()?.name ?? 'this organisation';
    const confirmed = await firstValueFrom(
      confirmAction(this.dialog, leaving
        ? { title: `Leave ${organisation}?`, message: 'You lose access to its keys, usage and jobs until someone invites you again.', confirm: 'Leave', destructive: true }
        : { title: `Remove ${member.user.displayName}?`, message: `${member.user.email} loses access to ${organisation}. Keys they created stay until revoked.`, confirm: 'Remove member', destructive: true }),
    );
    if (!confirmed) return;
    try {
      await firstValueFrom(this.teamApi.removeMember(organisationId, member.user.id));
      if (leaving) {
        this.session.selectOrganisation(null);
        await this.session.loadMe();
        return;
      }
      this.members.update((list) => list.filter((m) => m.user.id !== member.user.id));
      this.refreshAudit();
    } catch (error) {
      this.snackBar.open(this.memberMessage(error), 'Dismiss', { duration: 8000 });
    }
  }

  protected async invite(): Promise<void> {
    const organisationId = this.session.organisationId();
    this.inviteForm.markAllAsTouched();
    this.inviteError.set('');
    if (!organisationId || this.inviteForm.invalid) return;
    this.inviting.set(true);
    const { email, role } = this.inviteForm.getRawValue();
    try {
      const invitation = await firstValueFrom(this.teamApi.invite(organisationId, email.trim(), role));
      this.invitations.update((list) => [invitation, ...list.filter((i) => i.email.toLowerCase() !== invitation.email.toLowerCase())]);
      // clear the address and the form's submitted state, so the empty field is not shown as an error
      const directive = this.inviteFormDirective();
      if (directive) directive.resetForm({ email: '', role });
      else this.inviteForm.controls.email.reset('');
      this.snackBar.open(`Invitation sent to ${invitation.email}.`, 'OK', { duration: 5000 });
      this.refreshAudit();
    } catch (error) {
      applyServerErrors(this.inviteForm, fieldErrors(error));
      this.inviteError.set(
        problemKind(error) === 'already-member' ? 'That address already belongs to a member.' : problemMessage(error),
      );
    } finally {
      this.inviting.set(false);
    }
  }

  protected async revokeInvitation(invitation: Invitation): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    const confirmed = await firstValueFrom(
      confirmAction(this.dialog, {
        title: 'Withdraw the invitation?',
        message: `The link sent to ${invitation.email} stops working.`,
        confirm: 'Withdraw',
        destructive: true,
      }),
    );
    if (!confirmed) return;
    try {
      await firstValueFrom(this.teamApi.revokeInvitation(organisationId, invitation.id));
      this.invitations.update((list) => list.filter((i) => i.id !== invitation.id));
      this.refreshAudit();
    } catch (error) {
      this.snackBar.open(problemMessage(error), 'Dismiss', { duration: 8000 });
    }
  }

  /** Applies the filter form from the first page. */
  protected async searchAudit(): Promise<void> {
    this.auditCursors.set([null]);
    await this.fetchAudit(null);
  }

  protected async olderAudit(): Promise<void> {
    const next = this.auditNext();
    if (!next) return;
    this.auditCursors.update((c) => [...c, next]);
    await this.fetchAudit(next);
  }

  protected async newerAudit(): Promise<void> {
    if (this.auditCursors().length < 2) return;
    const cursors = this.auditCursors().slice(0, -1);
    this.auditCursors.set(cursors);
    await this.fetchAudit(cursors[cursors.length - 1] ?? null);
  }

  /** An entry's target for people: a member by name (the id stays in the tooltip), else its type and id. */
  protected targetLabel(entry: AuditEntry): string {
    const target = entry.target;
    if (!target) return '—';
    const member = target.type === 'user' ? this.members().find((m) => m.user.id === target.id) : undefined;
    return member ? member.user.displayName : `${target.type} ${target.id}`;
  }

  protected details(entry: AuditEntry): string {
    const parts = Object.entries(entry.details ?? {}).map(([k, v]) => `${k}: ${typeof v === 'string' ? v : JSON.stringify(v)}`);
    return parts.join(', ');
  }

  /** After a change the server records in the audit log: show its entry when the newest page is in view. */
  private refreshAudit(): void {
    if (this.can('audit.read') && this.auditCursors().length === 1) void this.fetchAudit(null);
  }

  private async fetchAudit(cursor: string | null): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    const f = this.auditFilter.getRawValue();
    // Dates are whole days in UTC: from the start of `from` to the end of `to`.
    const query: AuditQuery = {
      action: f.action || undefined,
      actor: f.actor || undefined,
      from: f.from ? new Date(`${f.from}T00:00:00Z`).toISOString() : undefined,
      to: f.to ? new Date(new Date(`${f.to}T00:00:00Z`).getTime() + 86_400_000).toISOString() : undefined,
      limit: AUDIT_PAGE_SIZE,
      cursor,
    };
    this.auditLoading.set(true);
    this.auditError.set('');
    const done = this.pendingTasks.add();
    try {
      const page = await firstValueFrom(this.teamApi.auditLog(organisationId, query));
      this.audit.set(page.items);
      this.auditNext.set(page.nextCursor);
    } catch (error) {
      this.auditError.set(problemMessage(error, 'The audit log could not be loaded.'));
    } finally {
      this.auditLoading.set(false);
      done();
    }
  }

  private memberMessage(error: unknown): string {
    if (problemKind(error) === 'last-owner') {
      return problemMessage(error, 'An organisation needs at least one owner: make someone else owner first.');
    }
    return problemMessage(error);
  }
}
