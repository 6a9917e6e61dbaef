import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import type { ApiKey, IssuedKey, KeyScope } from '../core/api-types';

export interface NewKeyRequest {
  readonly name: string;
  readonly scopes: readonly KeyScope[];
  readonly expiresAt: string | null;
}

/** What each scope lets a key do, for the create dialog. */
export const KEY_SCOPES: readonly { readonly value: KeyScope; readonly label: string; readonly hint: string }[] = [
  { value: 'eos:evaluate', label: 'Evaluate', hint: 'Forward and inverse equation-of-state calls.' },
  { value: 'jobs:write', label: 'Jobs', hint: 'Submit batch uploads and table builds.' },
  { value: 'usage:read', label: 'Usage', hint: 'Read this organisation’s usage figures.' },
];

/** The key routes of one organisation (gateway/auth/README.md, "Routes — API keys"). */
@Injectable({ providedIn: 'root' })
export class KeysApi {
  private readonly http = inject(HttpClient);

  private base(orgId: string): string {
    return `/v1/organisations/${encodeURIComponent(orgId)}/keys`;
  }

  list(orgId: string): Observable<ApiKey[]> {
    return this.http.get<{ items: ApiKey[] }>(this.base(orgId)).pipe(map((page) => page.items));
  }

  create(orgId: string, request: NewKeyRequest): Observable<IssuedKey> {
    return this.http.post<IssuedKey>(this.base(orgId), request);
  }

  rotate(orgId: string, keyId: string): Observable<IssuedKey> {
    return this.http.post<IssuedKey>(`${this.base(orgId)}/${encodeURIComponent(keyId)}/rotate`, {});
  }

  revoke(orgId: string, keyId: string): Observable<ApiKey> {
    return this.http.post<ApiKey>(`${this.base(orgId)}/${encodeURIComponent(keyId)}/revoke`, {});
  }
}
