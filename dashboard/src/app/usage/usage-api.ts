import { HttpClient, HttpParams, HttpResponse } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Apollo, gql } from 'apollo-angular';
import { firstValueFrom, map } from 'rxjs';

import type { GroupBy, UsageBucket, UsageQuota } from './usage-series';

export interface UsageRange {
  /** first day, 'YYYY-MM-DD' (UTC) */
  readonly from: string;
  /** day after the last one, 'YYYY-MM-DD' (exclusive, as the API takes it) */
  readonly to: string;
}

export interface UsagePageData {
  readonly from: string;
  readonly to: string;
  /** per day and group */
  readonly grouped: readonly UsageBucket[];
  /** per day, all groups: totals and latency percentiles */
  readonly total: readonly UsageBucket[];
  readonly quota: UsageQuota;
  readonly keys: readonly { readonly id: string; readonly name: string; readonly state: string }[];
}

export const USAGE_PAGE_QUERY = gql`
  query UsagePage($organisationId: ID!, $from: String!, $to: String!, $groupBy: UsageGroupBy!) {
    grouped: usage(organisationId: $organisationId, from: $from, to: $to, granularity: day, groupBy: $groupBy) {
      from
      to
      buckets { start group requests points errors }
      quota { plan pointsUsed pointsQuota pointsLeft periodStart periodEnd }
    }
    total: usage(organisationId: $organisationId, from: $from, to: $to, granularity: day, groupBy: none) {
      buckets { start requests points errors latencyP50Ms latencyP90Ms latencyP99Ms }
    }
    organisation(id: $organisationId) {
      id
      keys { id name state }
    }
  }
`;

interface UsagePageResult {
  grouped: { from: string; to: string; buckets: UsageBucket[]; quota: UsageQuota };
  total: { buckets: UsageBucket[] };
  organisation: { id: string; keys: { id: string; name: string; state: string }[] };
}

/** The usage file as the gateway writes it, and the name it suggests. */
export interface UsageCsv {
  readonly fileName: string;
  readonly text: string;
}

/**
 * Usage data for the Usage and Overview pages: series through GraphQL (`usage`, the account
 * graph), the CSV export through REST (GET /v1/usage?format=csv), both from the same service on
 * the gateway, so the file holds exactly what the charts show.
 */
@Injectable({ providedIn: 'root' })
export class UsageApi {
  private readonly apollo = inject(Apollo);
  private readonly http = inject(HttpClient);

  page(organisationId: string, range: UsageRange, groupBy: GroupBy): Promise<UsagePageData> {
    return firstValueFrom(
      this.apollo
        .query<UsagePageResult, { organisationId: string; from: string; to: string; groupBy: GroupBy }>({
          query: USAGE_PAGE_QUERY,
          variables: { organisationId, from: range.from, to: range.to, groupBy },
        })
        .pipe(
          map((result) => {
            const d = result.data as UsagePageResult;
            return {
              from: d.grouped.from,
              to: d.grouped.to,
              grouped: d.grouped.buckets,
              total: d.total.buckets,
              quota: d.grouped.quota,
              keys: d.organisation.keys,
            };
          }),
        ),
    );
  }

  async csv(organisationId: string, range: UsageRange, groupBy: GroupBy): Promise<UsageCsv> {
    const params = new HttpParams({ fromObject: { organisationId, from: range.from, to: range.to, granularity: 'day', groupBy, format: 'csv' } });
    const response: HttpResponse<string> = await firstValueFrom(this.http.get('/v1/usage', { params, observe: 'response', responseType: 'text' }));
    const disposition = response.headers.get('Content-Disposition') ?? '';
    const fileName = /filename="([^"]+)"/.exec(disposition)?.[1] ?? `usage-${range.from}-${range.to}-${groupBy}.csv`;
    return { fileName, text: response.body ?? '' };
  }
}

/** Offers text as a file download (an object URL on a temporary link). */
export function saveFile(fileName: string, text: string, type = 'text/csv;charset=utf-8'): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const link = document.createElement('a');
  link.href = url;
  link.download = fileName;
  link.style.display = 'none';
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 0);
}
