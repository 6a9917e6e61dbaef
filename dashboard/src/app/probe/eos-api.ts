import { HttpClient, HttpHeaders } from '@angular/common/http';
import { Injectable, inject, signal } from '@angular/core';
import { Observable } from 'rxjs';

import type { EvaluateResponse, RegimeResponse } from './eos-types';

export type EosOperation = 'evaluate' | 'invert' | 'regime';

/** The path of an EOS endpoint (same origin as the dashboard). */
export function eosPath(operation: EosOperation): string {
  return `/v1/eos/${operation}`;
}

/**
 * Calls the EOS endpoints with an API key the user pasted (not the session token): the request
 * carries its own Authorization header, which the session interceptor leaves alone.
 */
@Injectable({ providedIn: 'root' })
export class EosApi {
  private readonly http = inject(HttpClient);

  private headers(apiKey: string): HttpHeaders {
    return new HttpHeaders({ Authorization: `Bearer ${apiKey.trim()}`, 'Content-Type': 'application/json' });
  }

  evaluate(apiKey: string, body: unknown): Observable<EvaluateResponse> {
    return this.http.post<EvaluateResponse>(eosPath('evaluate'), body, { headers: this.headers(apiKey) });
  }

  invert(apiKey: string, body: unknown): Observable<EvaluateResponse> {
    return this.http.post<EvaluateResponse>(eosPath('invert'), body, { headers: this.headers(apiKey) });
  }

  regime(apiKey: string, body: unknown): Observable<RegimeResponse> {
    return this.http.post<RegimeResponse>(eosPath('regime'), body, { headers: this.headers(apiKey) });
  }
}

/**
 * The API key pasted on the Probe page, kept in memory only: it survives moving between pages but
 * not a reload, and is never written to storage.
 */
@Injectable({ providedIn: 'root' })
export class ProbeKey {
  readonly secret = signal('');
}
