import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import type { AuditPage, Invitation, Member, OrganisationRole } from '../core/api-types';

export interface AuditQuery {
  readonly action?: string;
  readonly actor?: string;
  /** ISO, inclusive. */
  readonly from?: string;
  /** ISO, exclusive. */
  readonly to?: string;
  readonly limit?: number;
  readonly cursor?: string | null;
}

/** Members, invitations and the audit log of one organisation (gateway/auth/README.md). */
@Injectable({ providedIn: 'root' })
export class TeamApi {
  private readonly http = inject(HttpClient);

  private base(orgId: string): string {
    return `/v1/organisations/${encodeURIComponent(orgId)}`;
  }

  members(orgId: string): Observable<Member[]> {
    return this.http.get<{ items: Member[] }>(`${this.base(orgId)}/members`).pipe(map((p) => p.items));
  }

  changeRole(orgId: string, userId: string, role: OrganisationRole): Observable<Member> {
    return this.http.patch<Member>(`${this.base(orgId)}/members/${encodeURIComponent(userId)}`, { role });
  }

  removeMember(orgId: string, userId: string): Observable<unknown> {
    return this.http.delete(`${this.base(orgId)}/members/${encodeURIComponent(userId)}`);
  }

  invitations(orgId: string): Observable<Invitation[]> {
    return this.http.get<{ items: Invitation[] }>(`${this.base(orgId)}/invitations`).pipe(map((p) => p.items));
  }

  invite(orgId: string, email: string, role: OrganisationRole): Observable<Invitation> {
    return this.http.post<Invitation>(`${this.base(orgId)}/invitations`, { email, role });
  }

  revokeInvitation(orgId: string, invitationId: string): Observable<unknown> {
    return this.http.delete(`${this.base(orgId)}/invitations/${encodeURIComponent(invitationId)}`);
  }

  auditLog(orgId: string, query: AuditQuery): Observable<AuditPage> {
    let params = new HttpParams().set('limit', String(query.limit ?? 25));
    if (query.action) params = params.set('action', query.action);
    if (query.actor) params = params.set('actor', query.actor);
    if (query.from) params = params.set('from', query.from);
    if (query.to) params = params.set('to', query.to);
    if (query.cursor) params = params.set('cursor', query.cursor);
    return this.http.get<AuditPage>(`${this.base(orgId)}/audit-log`, { params });
  }
}
