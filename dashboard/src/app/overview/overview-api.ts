import { Injectable, inject } from '@angular/core';
import { Apollo, gql } from 'apollo-angular';
import { firstValueFrom } from 'rxjs';

import { isUnknownField } from '../core/graphql';
import type { UsageBucket, UsageQuota } from '../usage/usage-series';

export const OVERVIEW_QUERY = gql`
  query Overview($organisationId: ID!, $weekFrom: String!, $weekTo: String!) {
    organisation(id: $organisationId) {
      id
      name
      plan
      keys { id name state }
    }
    period: usage(organisationId: $organisationId, granularity: day) {
      buckets { start requests points errors }
      quota { plan pointsUsed pointsQuota pointsLeft periodStart periodEnd }
    }
    week: usage(organisationId: $organisationId, from: $weekFrom, to: $weekTo, granularity: day, groupBy: key) {
      buckets { start group requests points errors }
    }
  }
`;

export const OVERVIEW_JOBS_QUERY = gql`
  query OverviewJobs($organisationId: ID!) {
    batches: jobs(organisationId: $organisationId, kind: BATCH, limit: 5) { id kind name state points progress createdAt finishedAt }
    tables: jobs(organisationId: $organisationId, kind: TABLE, limit: 5) { id kind name state points progress createdAt finishedAt }
  }
`;

export interface OverviewData {
  readonly organisation: { readonly id: string; readonly name: string; readonly plan: string; readonly keys: readonly { id: string; name: string; state: string }[] };
  readonly period: { readonly buckets: readonly UsageBucket[]; readonly quota: UsageQuota };
  readonly week: { readonly buckets: readonly UsageBucket[] };
}

export interface RecentJob {
  readonly id: string;
  readonly kind: 'BATCH' | 'TABLE';
  readonly name: string;
  readonly state: string;
  readonly points: number;
  readonly progress: number;
  readonly createdAt: string;
  readonly finishedAt: string | null;
}

/** Recent jobs, or `available: false` when this gateway has no jobs API (yet). */
export type RecentJobs = { readonly available: true; readonly items: readonly RecentJob[] } | { readonly available: false };

/** Data of the Overview page through GraphQL: plan, quota, usage of the period and the week, jobs. */
@Injectable({ providedIn: 'root' })
export class OverviewApi {
  private readonly apollo = inject(Apollo);

  async overview(organisationId: string, week: { from: string; to: string }): Promise<OverviewData> {
    const result = await firstValueFrom(
      this.apollo.query<OverviewData, { organisationId: string; weekFrom: string; weekTo: string }>({
        query: OVERVIEW_QUERY,
        variables: { organisationId, weekFrom: week.from, weekTo: week.to },
      }),
    );
    return result.data as OverviewData;
  }

  async recentJobs(organisationId: string, limit = 5): Promise<RecentJobs> {
    try {
      const result = await firstValueFrom(
        this.apollo.query<{ batches: RecentJob[]; tables: RecentJob[] }, { organisationId: string }>({ query: OVERVIEW_JOBS_QUERY, variables: { organisationId } }),
      );
      const data = result.data as { batches: RecentJob[]; tables: RecentJob[] };
      const items = [...data.batches, ...data.tables].sort((a, b) => b.createdAt.localeCompare(a.createdAt)).slice(0, limit);
      return { available: true, items };
    } catch (error) {
      if (isUnknownField(error, 'jobs')) return { available: false };
      throw error;
    }
  }
}
