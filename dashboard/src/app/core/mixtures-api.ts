import { HttpClient, HttpHeaders } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

/** One nuclide of a saved mixture, as /v1/mixtures returns it. */
export interface MixtureNuclide {
  readonly nuclide: string;
  readonly a: number;
  readonly z: number;
  readonly massFraction: number;
}

/** A built-in (id = name) or saved (id = uuid) mixture with the EOS library's Abar, Zbar and Ye. */
export interface Mixture {
  readonly id: string;
  readonly name: string;
  readonly description: string;
  readonly builtin: boolean;
  readonly nuclides: readonly MixtureNuclide[];
  readonly abar: number;
  readonly zbar: number;
  readonly ye: number;
  readonly createdAt: string | null;
  readonly updatedAt: string | null;
}

export interface MixtureInput {
  readonly name: string;
  readonly description: string;
  readonly nuclides: readonly { readonly nuclide?: string; readonly a: number; readonly z: number; readonly massFraction: number }[];
}

/**
 * /v1/mixtures (schema/openapi-mixtures.yaml) for the signed-in person; the session interceptor adds
 * the current organisation. Used by the Mixtures page and the Probe's composition picker.
 */
@Injectable({ providedIn: 'root' })
export class MixturesApi {
  private readonly http = inject(HttpClient);

  list(): Observable<Mixture[]> {
    return this.http.get<{ items: Mixture[] }>('/v1/mixtures').pipe(map((page) => page.items));
  }

  /** `idempotencyKey` makes a double-submitted form save once (the gateway replays the first answer). */
  create(input: MixtureInput, idempotencyKey: string): Observable<Mixture> {
    return this.http.post<Mixture>('/v1/mixtures', input, { headers: new HttpHeaders({ 'Idempotency-Key': idempotencyKey }) });
  }

  update(id: string, input: MixtureInput): Observable<Mixture> {
    return this.http.put<Mixture>(`/v1/mixtures/${encodeURIComponent(id)}`, input);
  }

  remove(id: string): Observable<unknown> {
    return this.http.delete(`/v1/mixtures/${encodeURIComponent(id)}`);
  }
}
