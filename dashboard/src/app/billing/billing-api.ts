import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import type { BillingOverview, Card, Invoice, PlanChange, TestCardEntry } from './billing-types';

/** The Plan & billing routes of one organisation (schema/openapi-billing.yaml). */
@Injectable({ providedIn: 'root' })
export class BillingApi {
  private readonly http = inject(HttpClient);

  private base(orgId: string): string {
    return `/v1/organisations/${encodeURIComponent(orgId)}/billing`;
  }

  overview(orgId: string): Observable<BillingOverview> {
    return this.http.get<BillingOverview>(this.base(orgId));
  }

  invoices(orgId: string): Observable<Invoice[]> {
    return this.http.get<{ items: Invoice[] }>(`${this.base(orgId)}/invoices`).pipe(map((page) => page.items));
  }

  changePlan(orgId: string, plan: string): Observable<{ billing: BillingOverview; change: PlanChange }> {
    return this.http.put<{ billing: BillingOverview; change: PlanChange }>(`${this.base(orgId)}/plan`, { plan });
  }

  /** Test mode only: the number goes to the gateway once, which maps it to a test token and drops it. */
  setTestCard(orgId: string, entry: TestCardEntry): Observable<Card> {
    return this.http.put<{ card: Card }>(`${this.base(orgId)}/card`, entry).pipe(map((answer) => answer.card));
  }
}
